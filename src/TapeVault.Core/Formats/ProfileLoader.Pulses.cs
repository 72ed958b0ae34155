namespace TapeVault.Core.Formats;

public static partial class ProfileLoader
{
    private sealed partial class Validator
    {
        // What a pulse measures, the byte and end markers and the block gap of the pulse-width family.
        private PulseWidthEncoding Symbols(PulseWidthDocument d, List<PulseClass> classes, PulseWidthEncoding encoding, BlockLayout layout)
        {
            bool halfCycles = (d.Pulses ?? "cycles") switch
            {
                "cycles" => false,
                "half-cycles" => true,
                var other => throw Error("pulseWidth.pulses", $"must be cycles or half-cycles, not '{other}'"),
            };

            var markers = d.Markers;
            var before = Markers(markers?.BeforeByte, "pulseWidth.markers.beforeByte", classes);
            var after = Markers(markers?.AfterByte, "pulseWidth.markers.afterByte", classes);
            var end = Markers(markers?.EndOfBlock, "pulseWidth.markers.endOfBlock", classes);
            if (markers is not null && before.Count + after.Count + end.Count == 0)
            {
                Fail("pulseWidth.markers", "must give beforeByte, afterByte or endOfBlock (or be left out)");
            }

            // Where a byte may begin, the decoder must tell the marker before it from the end of the block, and (with
            // no marker before bytes) the end of the block from the bits; each pair must differ with neither beginning
            // the other.
            if (end.Count > 0)
            {
                if (before.Count > 0)
                {
                    Distinct(end, before, "pulseWidth.markers.endOfBlock", "pulseWidth.markers.beforeByte");
                }
                else
                {
                    Distinct(end, encoding.Zero, "pulseWidth.markers.endOfBlock", "pulseWidth.zero");
                    Distinct(end, encoding.One, "pulseWidth.markers.endOfBlock", "pulseWidth.one");
                }
            }

            if (before.Count > 0 && before[0] == encoding.LeadInClass)
            {
                Fail("pulseWidth.markers.beforeByte[0]", $"must not be the lead-in class '{encoding.LeadInClass}': the lead-in ends on the first pulse of another class, which is where the first byte's marker begins");
            }

            int gap = 0;
            if (d.BlockGap is { } blockGap)
            {
                gap = Required(blockGap.Count, "pulseWidth.blockGap.count");
                if (gap < 16 || gap > encoding.LeadInMinimum * 4)
                {
                    Fail("pulseWidth.blockGap.count", $"must be between 16 and four times the lead-in's minimum ({encoding.LeadInMinimum * 4}), not {gap}");
                }

                if (encoding.Sync.Count == 0 && layout.Header is not [{ Role: FieldRole.Sync }, ..])
                {
                    Fail("pulseWidth.blockGap", "needs a sync (pulseWidth.sync or a sync field first in layout.header): a run as short as a gap proves a block start only with a sync after it");
                }
            }

            return encoding with { HalfCycles = halfCycles, BeforeByte = before, AfterByte = after, EndOfBlock = end, BlockGap = gap };
        }

        private List<string> Markers(List<string?>? items, string path, List<PulseClass> classes) =>
            items is null ? [] : ClassSequence(items, path, classes);

        private void Distinct(IReadOnlyList<string> a, IReadOnlyList<string> b, string pathA, string pathB)
        {
            if (a.SequenceEqual(b) || IsPrefix(a, b) || IsPrefix(b, a))
            {
                Fail(pathA, $"must differ from {pathB}, and neither may begin the other");
            }
        }

        // A field whose stored 0 stands for another value (a one-byte length where 0 means 256).
        private long? ZeroMeans(HeaderFieldDocument f, FieldRole role, int bytes, string path)
        {
            if (f.ZeroMeans is not { } value)
            {
                return null;
            }

            if (role is not (FieldRole.PayloadLength or FieldRole.Other))
            {
                Fail(path + ".zeroMeans", "is only for the roles payload-length and other");
            }

            long limit = bytes >= 4 ? uint.MaxValue + 1L : 1L << (8 * bytes);
            if (value < 1 || value > limit || value > MaximumPayloadLimit)
            {
                Fail(path + ".zeroMeans", $"must be between 1 and {Math.Min(limit, MaximumPayloadLimit)}, not {value}");
            }

            return value;
        }
    }
}
