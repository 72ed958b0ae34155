using TapeVault.Core.Formats;

namespace TapeVault.Core.Synthesis;

/// <summary>
/// Writes blocks to "tape" as a machine would: the flux reversal times, in seconds of tape at nominal speed, for a
/// square-wave recording. Lazily enumerated, so an hour of tape never sits in memory.
/// </summary>
public static class FluxWriter
{
    /// <param name="spans">When given, each block copy's place on the tape is added to it as the reversals are enumerated.</param>
    public static IEnumerable<double> Reversals(FormatProfile profile, IReadOnlyList<byte[]> blocks, ICollection<WrittenSpan>? spans = null)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(blocks);
        return profile.Family switch
        {
            FormatFamily.PulseWidth => PulseWidth(profile, blocks, spans),
            FormatFamily.Fsk => Fsk(profile, blocks, spans),
            FormatFamily.Biphase => Biphase(profile, blocks, spans),
            _ => throw new ArgumentOutOfRangeException(nameof(profile)),
        };
    }

    /// <summary>The bits of one byte framed by the profile: start bits, data bits in order, parity, stop bits.</summary>
    public static IEnumerable<bool> FramedBits(ByteFraming framing, byte value)
    {
        ArgumentNullException.ThrowIfNull(framing);
        return BitPatterns.Frame(framing, value);
    }

    private static IEnumerable<double> PulseWidth(FormatProfile profile, IReadOnlyList<byte[]> blocks, ICollection<WrittenSpan>? spans)
    {
        var encoding = profile.PulseWidth!;
        var byName = encoding.Classes.ToDictionary(c => c.Name, c => c.Seconds, StringComparer.Ordinal);
        double leadIn = byName[encoding.LeadInClass];
        double t = 0;
        int leadInCycles = Math.Max(encoding.LeadInMinimum * 2, (int)(profile.Recording.LeadInSeconds / leadIn));
        int gapCycles = encoding.BlockGap > 0
            ? encoding.BlockGap
            : Math.Max(encoding.LeadInMinimum * 2, (int)(profile.Recording.BlockGapSeconds / leadIn));
        bool first = true;
        var kinds = profile.BlockKinds;
        int index = 0;

        // A pulse is a whole cycle (two reversals) or, in a half-cycle format, the time to the next reversal.
        IEnumerable<double> Pulses(IEnumerable<string> names)
        {
            foreach (string name in names)
            {
                double period = byName[name];
                yield return t;
                if (!encoding.HalfCycles)
                {
                    yield return t + period / 2;
                }

                t += period;
            }
        }

        for (int b = 0; b < blocks.Count; b++)
        {
            // Blocks of several kinds come in the order a file writes them (BlockWriter.Blocks).
            var written = blocks[b];
            var codec = Blocks.BlockLayoutCodec.For(kinds[index++ % kinds.Count]);
            for (int copy = 0; copy < profile.Layout.Copies; copy++)
            {
                var block = codec.ForCopy(written, copy);
                double start = t;
                for (int i = 0, n = first ? leadInCycles : gapCycles; i < n; i++)
                {
                    foreach (double r in Pulses([encoding.LeadInClass])) yield return r;
                }

                first = false;
                double data = t;
                foreach (double r in Pulses(encoding.Sync)) yield return r;
                foreach (byte value in block)
                {
                    foreach (double r in Pulses(encoding.BeforeByte)) yield return r;
                    foreach (bool bit in FramedBits(profile.Framing, value))
                    {
                        foreach (double r in Pulses(bit ? encoding.One : encoding.Zero)) yield return r;
                    }

                    foreach (double r in Pulses(encoding.AfterByte)) yield return r;
                }

                foreach (double r in Pulses(encoding.EndOfBlock)) yield return r;
                spans?.Add(new WrittenSpan(b, copy, start, data, t));
            }
        }

        int trailer = Math.Max(16, (int)(profile.Recording.TrailerSeconds / leadIn));
        for (int i = 0; i < trailer; i++)
        {
            foreach (double r in Pulses([encoding.LeadInClass])) yield return r;
        }
    }

    private static IEnumerable<double> Fsk(FormatProfile profile, IReadOnlyList<byte[]> blocks, ICollection<WrittenSpan>? spans)
    {
        var fsk = profile.Fsk!;
        double bit = fsk.BitSeconds;
        double t = 0;
        bool first = true;

        // A bit cell of a tone: whole half-cycles, continuous phase (the tones are integer multiples of the baud).
        IEnumerable<double> Cell(double frequency)
        {
            int halves = Math.Max(1, (int)Math.Round(2 * frequency * bit));
            double half = bit / halves;
            for (int i = 0; i < halves; i++)
            {
                yield return t + i * half;
            }
        }

        IEnumerable<double> Idle(double seconds)
        {
            int cells = (int)Math.Ceiling(seconds / bit);
            for (int i = 0; i < cells; i++)
            {
                foreach (double r in Cell(fsk.MarkHz)) yield return r;
                t += bit;
            }
        }

        IEnumerable<double> Character(byte value)
        {
            foreach (bool b in FramedBits(profile.Framing, value))
            {
                foreach (double r in Cell(b ? fsk.MarkHz : fsk.SpaceHz)) yield return r;
                t += bit;
            }
        }

        // A leader of repeated characters: the lead-in's seconds of them, at least twice the minimum a reader needs.
        IEnumerable<double> Leader(CharacterLeadIn leader, double seconds)
        {
            double frame = profile.Framing.BitsPerByte * bit;
            int count = Math.Max(2 * leader.MinimumCount, (int)(seconds / frame));
            for (int i = 0; i < count; i++)
            {
                foreach (double r in Character((byte)leader.Character)) yield return r;
            }
        }

        var codec = Blocks.BlockLayoutCodec.For(profile.Layout);
        for (int b = 0; b < blocks.Count; b++)
        {
            var written = blocks[b];
            for (int copy = 0; copy < profile.Layout.Copies; copy++)
            {
                var block = codec.ForCopy(written, copy);
                double start = t;
                if (fsk.LeadInCharacters is { } leader)
                {
                    // Before the first block the leader alone; before each later one a gap of mark tone, then the leader.
                    if (!first)
                    {
                        foreach (double r in Idle(profile.Recording.BlockGapSeconds)) yield return r;
                    }

                    foreach (double r in Leader(leader, first ? profile.Recording.LeadInSeconds : 0)) yield return r;
                }
                else
                {
                    foreach (double r in Idle(first ? profile.Recording.LeadInSeconds : profile.Recording.BlockGapSeconds)) yield return r;
                }

                first = false;
                double data = t;
                foreach (byte value in block)
                {
                    foreach (double r in Character(value)) yield return r;
                }

                spans?.Add(new WrittenSpan(b, copy, start, data, t));
            }
        }

        foreach (double r in Idle(profile.Recording.TrailerSeconds)) yield return r;
        yield return t;
    }

    private static IEnumerable<double> Biphase(FormatProfile profile, IReadOnlyList<byte[]> blocks, ICollection<WrittenSpan>? spans)
    {
        var biphase = profile.Biphase!;
        double cell = biphase.CellSeconds;
        double t = 0;
        bool level = false;
        bool first = true;

        // Manchester: each cell is two half-cells of opposite level; a reversal wherever the level changes.
        IEnumerable<double> Bit(bool one)
        {
            // The second half is low for a falling mid-cell transition.
            bool secondHigh = one != biphase.OneIsFalling;
            bool firstHigh = !secondHigh;
            if (firstHigh != level)
            {
                yield return t;
            }

            yield return t + cell / 2;
            level = secondHigh;
            t += cell;
        }

        // The lead-in's pattern repeated (zeros, ones or alternating bits), ending on its last bit before the sync.
        IEnumerable<double> LeadIn(double seconds, int minimum)
        {
            string pattern = biphase.LeadInBits;
            int count = Math.Max(minimum, (int)(seconds / cell));
            count += (pattern.Length - (count % pattern.Length)) % pattern.Length;
            for (int i = 0; i < count; i++)
            {
                foreach (double r in Bit(pattern[i % pattern.Length] == '1')) yield return r;
            }
        }

        for (int b = 0; b < blocks.Count; b++)
        {
            var block = blocks[b];
            double start = t;
            foreach (double r in LeadIn(first ? profile.Recording.LeadInSeconds : profile.Recording.BlockGapSeconds, biphase.LeadInMinimumBits * 2)) yield return r;
            first = false;
            double data = t;
            foreach (char c in biphase.SyncBits)
            {
                foreach (double r in Bit(c == '1')) yield return r;
            }

            foreach (byte value in block)
            {
                foreach (bool bit in FramedBits(profile.Framing, value))
                {
                    foreach (double r in Bit(bit)) yield return r;
                }
            }

            spans?.Add(new WrittenSpan(b, 0, start, data, t));
        }

        foreach (double r in LeadIn(profile.Recording.TrailerSeconds, 16)) yield return r;
    }
}

/// <summary>
/// Where one copy of a written block lies on the tape, in seconds of tape at nominal speed: its lead-in (or the gap
/// before it) starts at <paramref name="StartSeconds"/>, its sync and bytes at <paramref name="DataSeconds"/>, and it
/// ends at <paramref name="EndSeconds"/>.
/// </summary>
public readonly record struct WrittenSpan(int Block, int Copy, double StartSeconds, double DataSeconds, double EndSeconds);
