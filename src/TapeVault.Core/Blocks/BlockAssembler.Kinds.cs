using TapeVault.Core.Formats;

namespace TapeVault.Core.Blocks;

// Formats with several block kinds: which kind the next block is, and what an earlier block says of its length.
public sealed partial class BlockAssembler
{
    private readonly KindSequence _kinds;

    /// <summary>
    /// The kinds of a profile in the order a file writes them, each written <see cref="BlockLayout.Copies"/> times:
    /// the next block is expected to be the next copy, or the next kind after the last copy; the copy read is told by
    /// its sync where the copies' syncs differ. A block whose length its format marks (an end marker) is taken for the
    /// kind its length fits. The last block of each kind read with a holding check gives the lengths that later
    /// kinds take from it. The file a later kind belongs to (a data block has the file name of its header block) is
    /// taken only from a block of the first kind read clean: a check that holds over a misread name (a weak check, two
    /// errors that cancel) on a block that fails on other evidence proves no name, and a data block named by it would
    /// stand apart from the readings of its own file.
    /// </summary>
    private sealed class KindSequence
    {
        private readonly BlockLayout[] _layouts;
        private readonly BlockScorer[] _scorers;
        private readonly BlockLayoutCodec[] _codecs;
        private readonly byte[]?[] _lastHeld;

        // The block of the first kind that names the blocks of later kinds after it: the last one read clean, until
        // the first copy of the next is read and is not.
        private byte[]? _naming;
        private byte[]? _read;
        private int _readCopy;
        private readonly int _copies;
        private int _current;
        private int _next;
        private int _nextCopy;

        public KindSequence(FormatProfile profile)
        {
            var kinds = profile.BlockKinds;
            _layouts = [.. kinds];
            _scorers = [.. kinds.Select(k => new BlockScorer(k, profile.Family, profileId: profile.Id, characterBaud: profile.Fsk?.Baud, characterBits: profile.Framing.BitsPerByte, characterFraming: profile.Framing))];
            _codecs = [.. kinds.Select(BlockLayoutCodec.For)];
            _lastHeld = new byte[]?[kinds.Count];
            _copies = profile.Layout.Copies;
            Many = kinds.Count > 1;
            long longest = 0;
            for (int k = 0; k < _layouts.Length; k++)
            {
                var layout = _layouts[k];
                long payload = layout.PayloadBytes ?? layout.MaximumPayloadBytes;
                longest = Math.Max(longest, layout.IsStream ? int.MaxValue : layout.HeaderBytes + payload + _codecs[k].CheckBytes);
            }

            LongestBlock = (int)Math.Min(longest, int.MaxValue);
        }

        public bool Many { get; }

        /// <summary>The most bytes a block of any kind can hold.</summary>
        public int LongestBlock { get; }

        public (BlockLayout, BlockScorer, BlockLayoutCodec) Begin()
        {
            _current = _next;
            return (_layouts[_current], _scorers[_current], _codecs[_current]);
        }

        /// <summary>The payload length the current kind takes from an earlier block, if that block was read.</summary>
        public long? PayloadFromRule() => PayloadFromRule(_current);

        private long? PayloadFromRule(int kind)
        {
            if (_layouts[kind].LengthRule is not { } rule || _lastHeld[rule.SourceKind] is not { } source)
            {
                return null;
            }

            var codec = _codecs[rule.SourceKind];
            if (rule.LengthField is { } field)
            {
                return codec.ReadField(source, field);
            }

            long length = codec.ReadField(source, rule.EndField!) - codec.ReadField(source, rule.StartField!) + (rule.InclusiveEnd ? 1 : 0);
            return length >= 0 ? length : null;
        }

        /// <summary>The kind a block ended by its format's marker is: the expected one if its length fits, else another that fits.</summary>
        public (BlockLayout, BlockScorer, BlockLayoutCodec, int ExpectedTotal) Fit(ReadOnlySpan<byte> bytes)
        {
            // A kind whose length is known and met comes before one whose length is open (a data block whose header
            // block was not read runs to any marker): a header block read where its data block was expected is a
            // header block, not a data block of the header's length whose weak check may hold by chance.
            int chosen = -1;
            for (int pass = 0; pass < 2 && chosen < 0; pass++)
            {
                for (int i = 0; i < _layouts.Length && chosen < 0; i++)
                {
                    int k = (_current + i) % _layouts.Length;
                    bool known = Expected(k, bytes) != int.MaxValue;
                    if ((pass == 1 || known) && Fits(k, bytes, out int payload) && (i == 0 || _codecs[k].CheckHolds(bytes, payload)))
                    {
                        chosen = k;
                    }
                }
            }

            _current = chosen >= 0 ? chosen : _current;
            return (_layouts[_current], _scorers[_current], _codecs[_current], Expected(_current, bytes));
        }

        private bool Fits(int kind, ReadOnlySpan<byte> bytes, out int payload)
        {
            var layout = _layouts[kind];
            payload = bytes.Length - layout.HeaderBytes - _codecs[kind].CheckBytes;
            if (payload < 0 || payload > layout.MaximumPayloadBytes)
            {
                return false;
            }

            int expected = Expected(kind, bytes);
            return expected == int.MaxValue || expected == bytes.Length;
        }

        // The whole length of a block of the kind, as far as its layout, an earlier block or its own length field says.
        private int Expected(int kind, ReadOnlySpan<byte> bytes)
        {
            var layout = _layouts[kind];
            var codec = _codecs[kind];
            long? payload = layout.PayloadBytes;
            if (layout.LengthRule is not null)
            {
                payload = PayloadFromRule(kind);
            }
            else if (layout.FieldWithRole(FieldRole.PayloadLength) is { } field)
            {
                payload = codec.TryReadField(bytes, field, out long value) ? value : null;
            }

            return payload is { } p ? (int)Math.Min(layout.HeaderBytes + Math.Min(p, layout.MaximumPayloadBytes) + codec.CheckBytes, int.MaxValue) : int.MaxValue;
        }

        /// <summary>A block of the current kind was read: keep it for the kinds after it, and expect the next block.</summary>
        public void Read(byte[] bytes, bool truncated)
        {
            var codec = _codecs[_current];
            int payload = bytes.Length - codec.HeaderBytes - codec.CheckBytes;
            bool held = !truncated && codec.CheckHolds(bytes, payload);
            int copy = codec.SyncField is { Expected.Count: > 1 } ? codec.MatchSync(bytes) : -1;
            if (copy < 0)
            {
                copy = _current == _next ? _nextCopy : 0;
            }

            _read = bytes;
            _readCopy = copy;
            if (held)
            {
                _lastHeld[_current] = bytes;
            }
            else if (copy == 0)
            {
                // The first copy of a new block failed: what an older block said no longer holds for the next kind.
                _lastHeld[_current] = null;
            }

            if (copy + 1 < _copies)
            {
                _next = _current;
                _nextCopy = copy + 1;
            }
            else
            {
                _next = (_current + 1) % _layouts.Length;
                _nextCopy = 0;
            }
        }

        /// <summary>
        /// The block just read (<see cref="Read"/>) was judged: one of the first kind read clean names the blocks of
        /// later kinds after it; a first copy that is not clean begins a file whose name nothing proves.
        /// </summary>
        public void Judged(bool clean)
        {
            if (_current != 0)
            {
                return;
            }

            if (clean)
            {
                _naming = _read;
            }
            else if (_readCopy == 0)
            {
                _naming = null;
            }
        }

        /// <summary>
        /// The identity of a block of the current kind: its own fields where it has them; a kind without any takes
        /// the file of the last block of the first kind read clean, and every kind is numbered by its place in the file.
        /// </summary>
        public BlockIdentity Identity(ReadOnlySpan<byte> header, int ordinal)
        {
            var own = KindIdentity(_layouts[_current], _current, header, ordinal);
            if (own.FileName is not null || own.FileId is not null || _current == 0 || _naming is not { } first)
            {
                return own;
            }

            var file = ReadIdentity(_layouts[0], first.AsSpan(0, _codecs[0].HeaderBytes), ordinal);
            return own with { FileName = file.FileName, FileId = file.FileId };
        }
    }

    /// <summary>
    /// The identity a header of block kind <paramref name="kind"/> (of a profile with several kinds) gives by its own
    /// fields: where it carries no block number, the kind is numbered by its place in the file, as the assembler
    /// numbers it, so that a header read again from its bytes (a merge's vote) keeps the key its readings carry.
    /// </summary>
    public static BlockIdentity KindIdentity(BlockLayout layout, int kind, ReadOnlySpan<byte> header, int ordinal)
    {
        var own = ReadIdentity(layout, header, ordinal);
        return own with { BlockNumber = own.BlockNumber ?? kind };
    }
}
