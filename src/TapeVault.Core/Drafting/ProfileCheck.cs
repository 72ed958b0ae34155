using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>How a finding of a check bears on the profile.</summary>
public enum CheckVerdict
{
    /// <summary>The capture bears the profile out here.</summary>
    Fits,

    /// <summary>Something looks implausible: worth a look, not proof of a wrong profile.</summary>
    Doubtful,

    /// <summary>The profile does not read this capture as it says.</summary>
    DoesNotFit,
}

/// <summary>One thing a check found, in words.</summary>
public sealed record CheckFinding(CheckVerdict Verdict, string Subject, string Text);

/// <summary>What decoding a capture with a profile showed: the blocks, the checks, and what fits and what does not.</summary>
public sealed record ProfileCheckReport(
    string ProfileId,
    double SecondsRead,
    int Positions,
    int Clean,
    int Failed,
    int Unchecked,
    double? MedianSpeed,
    IReadOnlyList<CheckFinding> Findings,
    int CleanBytes = 0)
{
    /// <summary>
    /// How much the profile reads with its check holding: the bytes of the clean blocks whose contents differ (a run
    /// of blocks alike, of zeros say, satisfies a sum or XOR whatever reads them), times the share of checked blocks
    /// that are clean (a reading that finds hundreds of short blocks, a few holding a one-byte check by chance, shares
    /// little). 0 when the profile has no check.
    /// </summary>
    public double CheckedReading => Clean + Failed == 0 ? 0 : CleanBytes * ((double)Clean / (Clean + Failed));

    public bool Fits => Findings.All(f => f.Verdict != CheckVerdict.DoesNotFit);
}

/// <summary>
/// Checks a profile against a capture: decodes it with the whole detector bank (the read path as a decode runs it)
/// and reports the blocks found, the checks that hold, and fields that look implausible: lengths out of range or
/// zero, names that are not printable, block numbers that do not go up, framing errors, blocks cut short, and a
/// playback speed far from nominal (the profile's durations off what the tape plays).
/// </summary>
public static class ProfileCheck
{
    /// <summary>A tape off nominal by more than this is worth a look (decks run a few per cent off, common practice).</summary>
    public const double DoubtfulSpeed = 0.05;

    /// <summary>The lead-in finder follows ±12 %: beyond it the profile's durations are wrong, not the deck.</summary>
    public const double WrongSpeed = 0.10;

    /// <summary>Decodes the whole capture at <paramref name="path"/>.</summary>
    public static ProfileCheckReport Run(FormatProfile profile, string path, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(profile);
        using var result = CaptureDecoder.Decode(path, profile, options: new DecodeOptions { Cancellation = cancellation });
        return Report(profile, result.Best, result.Capture.DurationSeconds);
    }

    /// <summary>Decodes a bounded stretch already in memory (the web page's check: cheap whatever the capture's length).</summary>
    public static ProfileCheckReport Run(FormatProfile profile, CaptureStretch stretch, CancellationToken cancellation = default)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(stretch);
        var session = new CaptureDecoder.DecodeSession(profile, CaptureDecoder.BankFor(profile, Detection.DetectorBanks.Default), stretch.SampleRate);
        const int chunk = 16_384;
        for (int offset = 0; offset < stretch.Samples.Length; offset += chunk)
        {
            cancellation.ThrowIfCancellationRequested();
            session.Process(stretch.Samples.AsSpan(offset, Math.Min(chunk, stretch.Samples.Length - offset)));
        }

        return Report(profile, BlockPositioner.BestPerPosition(session.Finish()), stretch.Seconds);
    }

    public static ProfileCheckReport Report(FormatProfile profile, IReadOnlyList<BlockCandidate> best, double seconds)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(best);
        string n(double x) => x.ToString("0.#", CultureInfo.InvariantCulture);
        var findings = new List<CheckFinding>();
        var blocks = best.OrderBy(b => b.Position).ToList();
        int clean = blocks.Count(b => b.Status == BlockStatus.Clean);
        int failed = blocks.Count(b => b.Status == BlockStatus.Failed);
        int unchecked_ = blocks.Count(b => b.Status == BlockStatus.Unchecked);
        if (blocks.Count == 0)
        {
            findings.Add(new(CheckVerdict.DoesNotFit, "blocks", $"No block found in {n(seconds)} s: no lead-in and sync as the profile describes them, at any speed within ±12 %."));
            return new ProfileCheckReport(profile.Id, seconds, 0, 0, 0, 0, null, findings);
        }

        findings.Add(new(CheckVerdict.Fits, "blocks", $"{blocks.Count} block position(s) found in {n(seconds)} s."));
        var layout = profile.Layout;
        if (layout.Checksum is not null)
        {
            int checkedBlocks = clean + failed;
            double share = checkedBlocks == 0 ? 0 : (double)clean / checkedBlocks;
            var verdict = share >= 0.8 ? CheckVerdict.Fits : share >= 0.3 ? CheckVerdict.Doubtful : CheckVerdict.DoesNotFit;
            findings.Add(new(verdict, "layout.checksum", $"The check value ({layout.Checksum.Algorithm}) holds on {clean} of {checkedBlocks} block(s) read: {n(100 * share)} %."));
        }
        else
        {
            double printable = CommonSections.PrintableShare(blocks.Select(b => b.Payload.ToArray()));
            findings.Add(new(CheckVerdict.Doubtful, "layout", $"The profile has no check value: {unchecked_} unchecked block(s); {n(100 * printable)} % of their bytes are printable text."));
        }

        int bytes = blocks.Sum(b => b.Header.Length + b.Payload.Length);
        int framingErrors = blocks.Sum(b => b.FramingErrors);
        if (profile.Framing.BitsPerByte > profile.Framing.DataBits && bytes > 0)
        {
            double share = (double)framingErrors / bytes;
            findings.Add(new(share <= 0.02 ? CheckVerdict.Fits : share <= 0.1 ? CheckVerdict.Doubtful : CheckVerdict.DoesNotFit, "framing",
                $"{framingErrors} of {bytes} byte(s) have a start, stop or parity bit wrong ({n(100 * share)} %)."));
        }

        int truncated = blocks.Count(b => b.Truncated);
        if (truncated > 0)
        {
            findings.Add(new(truncated * 2 > blocks.Count ? CheckVerdict.DoesNotFit : CheckVerdict.Doubtful, "layout",
                $"{truncated} block(s) ended before their layout said they would (a dropout, or a length field or layout that does not fit)."));
        }

        var codec = BlockLayoutCodec.For(layout);
        if (layout.FieldWithRole(FieldRole.PayloadLength) is { } lengthField)
        {
            int outOfRange = 0;
            foreach (var b in blocks.Where(b => b.Header.Length == codec.HeaderBytes))
            {
                long value = codec.ReadField(b.Header.AsSpan(), lengthField);
                outOfRange += value <= 0 || value > layout.MaximumPayloadBytes ? 1 : 0;
            }

            if (outOfRange > 0)
            {
                findings.Add(new(outOfRange * 2 > blocks.Count ? CheckVerdict.DoesNotFit : CheckVerdict.Doubtful, $"layout.header.{lengthField.Name}",
                    $"The length field is 0 or above the maximum payload ({layout.MaximumPayloadBytes}) in {outOfRange} block(s)."));
            }
        }

        if (layout.FieldWithRole(FieldRole.FileName) is { } nameField)
        {
            int unprintable = blocks.Count(b => b.Identity.FileName is { } name && name.Contains('?', StringComparison.Ordinal));
            findings.Add(new(unprintable == 0 ? CheckVerdict.Fits : unprintable * 2 > blocks.Count ? CheckVerdict.DoesNotFit : CheckVerdict.Doubtful, $"layout.header.{nameField.Name}",
                unprintable == 0 ? "Every file name read is printable text." : $"{unprintable} file name(s) hold bytes that are not printable text."));
        }

        if (layout.FieldWithRole(FieldRole.BlockNumber) is { } numberField)
        {
            int steps = 0;
            int down = 0;
            BlockCandidate? previous = null;
            foreach (var b in blocks.Where(b => b.Identity.BlockNumber is not null))
            {
                if (previous is not null && previous.Identity.FileName == b.Identity.FileName && previous.Identity.FileId == b.Identity.FileId)
                {
                    steps++;
                    down += b.Identity.BlockNumber < previous.Identity.BlockNumber ? 1 : 0;
                }

                previous = b;
            }

            if (steps > 0)
            {
                findings.Add(new(down == 0 ? CheckVerdict.Fits : down * 3 > steps ? CheckVerdict.DoesNotFit : CheckVerdict.Doubtful, $"layout.header.{numberField.Name}",
                    down == 0 ? $"Block numbers never go down within a file ({steps} step(s))." : $"Block numbers go down {down} time(s) in {steps} step(s) within a file."));
            }
        }

        var speeds = blocks.Select(b => b.Speed).Order().ToList();
        double median = speeds[speeds.Count / 2];
        double off = Math.Abs(median - 1);
        findings.Add(new(off <= DoubtfulSpeed ? CheckVerdict.Fits : off <= WrongSpeed ? CheckVerdict.Doubtful : CheckVerdict.DoesNotFit, "speed",
            $"The tape plays {n(100 * (median - 1))} % off the profile's nominal speed (median of the blocks)" +
            (off > DoubtfulSpeed ? "; decks run a few per cent off, so the profile's durations may be measured at a wrong speed." : ".")));
        int cleanBytes = blocks.Where(b => b.Status == BlockStatus.Clean)
            .Select(b => Convert.ToHexString(b.Header.AsSpan()) + Convert.ToHexString(b.Payload.AsSpan()))
            .Distinct()
            .Sum(h => h.Length / 2);
        return new ProfileCheckReport(profile.Id, seconds, blocks.Count, clean, failed, unchecked_, median, findings, cleanBytes);
    }

    /// <summary>The report as lines of text, for the command line.</summary>
    public static IEnumerable<string> Describe(ProfileCheckReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        yield return $"Profile {report.ProfileId}: {report.Positions} block position(s): {report.Clean} clean, {report.Failed} failed, {report.Unchecked} unchecked.";
        foreach (var f in report.Findings)
        {
            string mark = f.Verdict switch { CheckVerdict.Fits => "fits   ", CheckVerdict.Doubtful => "doubt  ", _ => "misfit " };
            yield return $"  {mark} {f.Subject}: {f.Text}";
        }

        yield return report.Fits ? "The profile reads this capture as it says." : "The profile does not fit this capture: see the misfits above.";
    }
}
