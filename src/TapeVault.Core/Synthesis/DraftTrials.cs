using TapeVault.Core.Decoding;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Synthesis;

/// <summary>The outcome of one draft trial: what was written, what the draft guessed, and what each profile read back.</summary>
public sealed record DraftTrialResult(
    int Seed,
    string Family,
    string DraftedFamily,
    int Written,
    int RecoveredByConfirmedDraft,
    int RecoveredByTruth,
    IReadOnlyList<string> Guessed,
    int Fields,
    double Confidence,
    string Damage,
    string? Failure,
    string TruthJson,
    string? DraftJson,
    string? DraftProfileJson = null,
    double Speed = 1,
    int RecoveredByBoth = 0,
    int RecoveredByEarlierRule = 0,
    int RecoveredByBothEarlierRule = 0)
{
    public double DraftShare => Written == 0 ? 0 : (double)RecoveredByConfirmedDraft / Written;

    public double TruthShare => Written == 0 ? 0 : (double)RecoveredByTruth / Written;
}

/// <summary>
/// A trial's capture: the truth profile, the damage drawn, the blocks as written, the capture's path (after any outside
/// damage), the damage in one line, and the outside tool's part of it alone (null when none was applied).
/// </summary>
public sealed record DraftTrialCapture(string Family, int Seed, string TruthJson, FormatProfile Truth, ChannelDamage Damage, SynthesizedCapture Written, string Path, string Described, string? OutsideDamage);

/// <summary>
/// One measurement of the drafter: a random profile of a family (<see cref="RandomFormats"/>), files written through
/// the channel model with damage drawn from wide ranges, optionally damaged further by an outside tool, a draft from
/// the capture, the draft's guesses confirmed from the truth (<see cref="GuessConfirmation"/>: the guessed fields
/// only, and apart from that by the earlier rule, for comparison), and the confirmed drafts and the truth decoding
/// the whole capture.
/// </summary>
public static class DraftTrials
{
    public static DraftTrialResult Run(string family, int seed, string folder, Func<string, Random, (string Path, string Description)>? outsideDamage = null, ChannelDamage? damageGiven = null)
    {
        var trial = Capture(family, seed, folder, outsideDamage, damageGiven);
        string truthJson = trial.TruthJson;
        var truth = trial.Truth;
        var capture = trial.Written;
        string path = trial.Path;
        string described = trial.Described;
        bool[] truthBlocks;
        using (var truthDecode = CaptureDecoder.Decode(path, truth))
        {
            truthBlocks = RandomFormats.RecoveredBlocks(truthDecode, truth, capture.Blocks);
        }

        int truthRead = truthBlocks.Count(r => r);
        ProfileDraft draft;
        try
        {
            draft = ProfileDrafter.Draft(path);
        }
        catch (ProfileDraftException e)
        {
            return new DraftTrialResult(seed, family, "none", capture.Blocks.Count, 0, truthRead, [], 0, 0, described, e.Message, truthJson, null);
        }

        string drafted = draft.Findings.First(f => f.Path == "family").Value;
        // Confirmed by the guessed fields alone; and by the earlier rule (a guessed family took the truth's whole
        // encoding section), decoded only where the two differ, so that figures taken either way can be compared.
        string confirmedJson = GuessConfirmation.Confirm(draft.Json, truthJson, draft.GuessedPaths);
        var (read, both, failure) = ReadConfirmed(confirmedJson);
        string earlierJson = GuessConfirmation.Confirm(draft.Json, truthJson, draft.GuessedPaths, ConfirmationRule.Earlier);
        var (earlierRead, earlierBoth, _) = earlierJson == confirmedJson
            ? (read, both, failure)
            : ReadConfirmed(earlierJson);

        (int Read, int Both, string? Failure) ReadConfirmed(string confirmed)
        {
            try
            {
                using var draftRead = CaptureDecoder.Decode(path, ProfileLoader.Parse(confirmed, "confirmed"));
                var draftBlocks = RandomFormats.RecoveredBlocks(draftRead, truth, capture.Blocks);
                return (draftBlocks.Count(r => r), draftBlocks.Where((r, i) => r && truthBlocks[i]).Count(), null);
            }
            catch (ProfileException e)
            {
                return (0, 0, "the confirmed draft does not load: " + e.Message);
            }
        }

        return new DraftTrialResult(seed, family, drafted, capture.Blocks.Count, read, truthRead, draft.GuessedPaths, draft.Findings.Count, draft.Confidence, described, failure, truthJson, draft.Json + "\n" + draft.SideListJson(), draft.Json, trial.Damage.Speed, both, earlierRead, earlierBoth);
    }

    /// <summary>
    /// A trial's capture alone: the random profile of <paramref name="family"/> drawn from <paramref name="seed"/>, its
    /// files written through the channel model with the drawn damage (or <paramref name="damageGiven"/>), and the
    /// outside damage after, exactly as <see cref="Run"/> makes it; nothing is drafted or decoded.
    /// </summary>
    public static DraftTrialCapture Capture(string family, int seed, string folder, Func<string, Random, (string Path, string Description)>? outsideDamage = null, ChannelDamage? damageGiven = null)
    {
        ArgumentNullException.ThrowIfNull(folder);
        var rng = new Random(seed);
        string truthJson = RandomFormats.Draw(family, rng);
        var truth = ProfileLoader.Parse(truthJson, "truth");
        // The damage is drawn whether or not one is given, so that a seed's files are the same either way.
        var damage = Damage(rng);
        if (damageGiven is not null)
        {
            damage = damageGiven with { Seed = damage.Seed };
        }

        // A stream is one block per file: several short files give it blocks to count.
        var files = truth.Layout.IsStream
            ? RandomFormats.Files(rng, 6, 120)
            : RandomFormats.Files(rng, 2, truth.Family == FormatFamily.Fsk && truth.Fsk!.Baud < 600 ? 300 : 700);
        string path = Path.Combine(folder, $"draft-{family}-{seed}.wav");
        var capture = CaptureSynthesizer.Write(path, truth, files, damage);
        string described = RandomDamage.Describe(damage);
        string? outside = null;
        if (outsideDamage is not null)
        {
            var (damaged, chain) = outsideDamage(path, rng);
            path = damaged;
            outside = chain;
            described += "; then " + chain;
        }

        return new DraftTrialCapture(family, seed, truthJson, truth, damage, capture, path, described, outside);
    }

    /// <summary>
    /// Damage from wide ranges (speed ±7 %, wow to 0.4 %, flutter to 0.2 %, SNR 18–45 dB, up to 10 dropouts a minute,
    /// azimuth, band limit, hum, print-through, clipping, inversion, either read chain, 22.05–96 kHz): the random
    /// damage of <see cref="RandomDamage"/> with its harshest corners (SNR under 18 dB, a dropout every second) left
    /// to the trust measurements, since a draft is made from a curator's better captures.
    /// </summary>
    public static ChannelDamage Damage(Random rng)
    {
        ArgumentNullException.ThrowIfNull(rng);
        var d = RandomDamage.Draw(rng);
        return d with
        {
            SnrDb = Math.Max(18, d.SnrDb ?? 45),
            RandomDropoutsPerMinute = d.RandomDropoutsPerMinute / 6,
            WowPercent = Math.Min(0.4, d.WowPercent),
            FlutterPercent = Math.Min(0.2, d.FlutterPercent),
        };
    }
}
