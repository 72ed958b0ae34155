using TapeVault.Core.Blocks;
using TapeVault.Core.Image;

namespace TapeVault.Bench;

/// <summary>
/// Where a capture put each written character of a stream, and so whether a stream reading is the written bytes at the
/// place it claims. A stream reading claims a place by its time: its first character lies at some time of its capture,
/// and the character written there is what it must be. Judged only by its bytes, lined up wherever in the files they
/// agree best, a short reading of zeros or of one repeated byte (which the trust bench's files are full of) is "right"
/// somewhere whatever the capture's signal held at its time.
/// <para>
/// Where a capture put the written characters is found from the capture's own readings (every setting's): each reading
/// of <see cref="LeastFittingCharacters"/> or more characters whose bytes line up with one written file at one offset,
/// all but a tenth of them agreeing there and no other offset agreeing as well (a reading inside a run of one
/// repeated byte lines up at many), gives pairs of (written index, capture
/// time). Per file, a line time = start + spacing × index is fitted through them (the spacing: the median of pairwise
/// slopes over the pass's pairs, a capture's speed being one for all its files; the start: the median of time −
/// spacing × index over the file's pairs). A reading is then at written index (time of its first character − start) /
/// spacing of the file whose span holds that time, rounded; it is right when its bytes are that file's bytes from there.
/// A reading whose time lies in no file's span, where every written file has a line, lies where nothing was written and
/// is wrong. A reading whose time lies outside every fitted span while some file has no line (its capture read none of
/// it in full) cannot be placed, and is judged lined up anywhere, as before (counted as unplaced).
/// </para>
/// </summary>
internal sealed class StreamPlaces
{
    /// <summary>The fewest characters of a reading that places written characters in its capture's time.</summary>
    public const int LeastFittingCharacters = 8;

    /// <summary>How far outside a file's fitted span, in characters, a reading's start still belongs to it (one false character framed before or after it).</summary>
    private const double SpanMargin = 2.5;

    private readonly List<TapeFile> _files;
    private readonly (double Start, double Spacing)?[] _lines;

    private StreamPlaces(List<TapeFile> files, (double, double)?[] lines)
    {
        _files = files;
        _lines = lines;
    }

    /// <summary>What judging one reading found.</summary>
    public enum Verdict
    {
        /// <summary>The written bytes at the place its time says.</summary>
        Right,

        /// <summary>Not the written bytes at the place its time says, or at a time where nothing was written.</summary>
        Wrong,

        /// <summary>Its time lies in no fitted file's span while some file has no line: not placed.</summary>
        Unplaced,
    }

    /// <summary>The lines of one capture, from all its readings.</summary>
    public static StreamPlaces Fit(IReadOnlyList<BlockCandidate> readings, List<TapeFile> files)
    {
        ArgumentNullException.ThrowIfNull(readings);
        ArgumentNullException.ThrowIfNull(files);
        var pairs = new List<(int Index, double Time)>[files.Count];
        for (int f = 0; f < files.Count; f++)
        {
            pairs[f] = [];
        }

        foreach (var c in readings)
        {
            var run = c.Payload.AsSpan();
            if (run.Length < LeastFittingCharacters || c.ByteSeconds.Length != run.Length)
            {
                continue;
            }

            var (file, offset, count, second) = Alignments(run, files);
            if (count * 10 < run.Length * 9 || second >= count)
            {
                continue;
            }

            var content = files[file].Content;
            for (int i = 0; i < run.Length; i++)
            {
                int at = offset + i;
                if (at >= 0 && at < content.Length && content[at] == run[i])
                {
                    pairs[file].Add((at, c.ByteSeconds[i]));
                }
            }
        }

        // One spacing for the capture: its speed is the same for every file.
        var slopes = new List<double>();
        foreach (var list in pairs)
        {
            for (int k = 0; k < Math.Min(400, list.Count * 4); k++)
            {
                var x = list[(int)((k * 7919L) % list.Count)];
                var y = list[(int)(((k * 104729L) + 13) % list.Count)];
                if (Math.Abs(x.Index - y.Index) >= 10)
                {
                    slopes.Add((x.Time - y.Time) / (x.Index - y.Index));
                }
            }
        }

        var lines = new (double, double)?[files.Count];
        if (slopes.Count == 0)
        {
            return new StreamPlaces(files, lines);
        }

        double spacing = Median(slopes);
        for (int f = 0; f < files.Count; f++)
        {
            if (pairs[f].Count > 0)
            {
                lines[f] = (Median([.. pairs[f].Select(p => p.Time - (spacing * p.Index))]), spacing);
            }
        }

        return new StreamPlaces(files, lines);
    }

    /// <summary>Whether <paramref name="reading"/> is the written bytes at the place its first character's time says.</summary>
    public Verdict Judge(BlockCandidate reading)
    {
        ArgumentNullException.ThrowIfNull(reading);
        var run = reading.Payload.AsSpan();
        if (run.IsEmpty || reading.ByteSeconds.IsEmpty)
        {
            return Verdict.Wrong;
        }

        var at = Place(reading.ByteSeconds[0]);
        if (at is not { } place)
        {
            return Array.TrueForAll(_lines, l => l is not null) ? Verdict.Wrong : Verdict.Unplaced;
        }

        var content = _files[place.File].Content;
        return place.Index >= 0 && place.Index + run.Length <= content.Length && content.AsSpan(place.Index, run.Length).SequenceEqual(run)
            ? Verdict.Right
            : Verdict.Wrong;
    }

    /// <summary>The file and written index a capture time lies at (the file whose span, widened by <see cref="SpanMargin"/> characters, holds it; the nearest start if two do).</summary>
    public (int File, int Index)? Place(double seconds)
    {
        (int File, int Index)? best = null;
        double nearest = double.PositiveInfinity;
        for (int f = 0; f < _files.Count; f++)
        {
            if (_lines[f] is not { } line)
            {
                continue;
            }

            double index = (seconds - line.Start) / line.Spacing;
            if (index < -SpanMargin || index > _files[f].Content.Length - 1 + SpanMargin)
            {
                continue;
            }

            double distance = Math.Abs(index - Math.Clamp(index, 0, _files[f].Content.Length - 1));
            if (distance < nearest)
            {
                nearest = distance;
                best = (f, (int)Math.Round(index));
            }
        }

        return best;
    }

    /// <summary>The best file and offset a run lines up with (the first of equals), its count of agreeing characters, and the best count at any other offset.</summary>
    internal static (int File, int Offset, int Count, int Second) Alignments(ReadOnlySpan<byte> run, List<TapeFile> files)
    {
        int bestFile = 0, bestOffset = 0, bestCount = -1, second = -1;
        for (int f = 0; f < files.Count; f++)
        {
            var content = files[f].Content;
            for (int o = -run.Length + 1; o < content.Length; o++)
            {
                int count = 0;
                for (int i = Math.Max(0, -o); i < run.Length && o + i < content.Length; i++)
                {
                    count += run[i] == content[o + i] ? 1 : 0;
                }

                if (count > bestCount)
                {
                    second = bestCount;
                    (bestFile, bestOffset, bestCount) = (f, o, count);
                }
                else if (count > second)
                {
                    second = count;
                }
            }
        }

        return (bestFile, bestOffset, bestCount, second);
    }

    private static double Median(List<double> values)
    {
        values.Sort();
        return values[values.Count / 2];
    }
}
