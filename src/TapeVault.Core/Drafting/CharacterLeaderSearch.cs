using TapeVault.Core.Formats;

namespace TapeVault.Core.Drafting;

/// <summary>
/// A leader of repeated characters found before blocks read as a stream: the character, the shortest run of it seen
/// before a block, how many blocks began with it, and the layout the bytes after it hold (their check proves it).
/// </summary>
public sealed record CharacterLeaderFinding(int Character, int ShortestRun, int BlocksWithLeader, int BlocksRead, LayoutFinding Layout);

/// <summary>
/// FSK formats that announce a block with a leader of one character repeated (rather than with mark tone) read, in a
/// trial decode as a stream, as blocks that each begin with a long run of one byte. The search takes the byte most
/// blocks begin with a long run of, cuts each block's run off, and searches what follows for a layout. The leader is
/// proposed only when that layout has a check value of the catalogue and begins with bytes alike in most blocks
/// outside the check (the sync characters a reader waits for after the leader): a plain stream, whose text may well
/// repeat a character, never has that, so it keeps its mark-tone lead-in.
/// </summary>
public static class CharacterLeaderSearch
{
    /// <summary>The fewest characters in a row that count as a leader (a run of text rarely repeats one this often).</summary>
    public const int LeastRun = 8;

    /// <summary>How far into a block its leader run may begin: the first characters of a leader may be misframed.</summary>
    private const int MaximumRunStart = 4;

    public static CharacterLeaderFinding? Find(IReadOnlyList<byte[]> blocks, ByteFraming framing)
    {
        ArgumentNullException.ThrowIfNull(blocks);
        ArgumentNullException.ThrowIfNull(framing);
        if (framing.StartBits.Length == 0 || framing.StopBits.Length == 0 || blocks.Count < 2)
        {
            return null;
        }

        // Each block's first long run: its character and where the run ends.
        var runs = new List<(int Character, int Length, int End)>();
        foreach (var block in blocks)
        {
            if (FirstRun(block) is { } run)
            {
                runs.Add(run);
            }
        }

        var byCharacter = runs.GroupBy(r => r.Character).OrderByDescending(g => g.Count()).FirstOrDefault();
        if (byCharacter is null || byCharacter.Count() < Math.Max(2, 0.5 * blocks.Count))
        {
            return null;
        }

        int character = byCharacter.Key;
        if (BitPatterns.SelfSimilarShift(framing, character) != 0)
        {
            return null;
        }

        // What follows each leader, with a reading a character shorter (noise read as one before the line went idle).
        var after = new List<DraftBlock>();
        foreach (var block in blocks)
        {
            if (FirstRun(block) is { } run && run.Character == character && block.Length - run.End >= 3)
            {
                var rest = block[run.End..];
                after.Add(new DraftBlock([rest, rest[..^1]]));
            }
        }

        // The bytes before the check's coverage are the sync characters a reader waits for, no header fields: the
        // header's fields are looked for from where the coverage starts.
        var layout = LayoutSearch.Search(after, fieldsInCoverage: true);
        if (!layout.HasChecksum || layout.CoverageStart == 0 || layout.Blocks.Count < 2)
        {
            return null;
        }

        // The sync characters: alike in three in four of the blocks whose check holds (the check does not cover them,
        // so a block whose sync was misread by a bit still holds it), and not the leader's own character.
        var sync = layout.Blocks
            .Where(b => b.Length > layout.CoverageStart)
            .GroupBy(b => Convert.ToHexString(b, 0, layout.CoverageStart))
            .OrderByDescending(g => g.Count())
            .FirstOrDefault();
        if (sync is null || sync.Count() < Math.Max(2, LeastSyncShare * layout.Blocks.Count) || sync.First()[0] == character)
        {
            return null;
        }

        return new CharacterLeaderFinding(character, byCharacter.Min(r => r.Length), byCharacter.Count(), blocks.Count,
            layout with { Sync = sync.First()[..layout.CoverageStart] });
    }

    /// <summary>The least share of the blocks whose check holds that must begin with the same sync characters.</summary>
    public const double LeastSyncShare = 0.75;

    /// <summary>The first run of at least <see cref="LeastRun"/> equal bytes that begins within the block's first few.</summary>
    private static (int Character, int Length, int End)? FirstRun(byte[] block)
    {
        for (int start = 0; start <= MaximumRunStart && start < block.Length; start++)
        {
            int end = start + 1;
            while (end < block.Length && block[end] == block[start])
            {
                end++;
            }

            if (end - start >= LeastRun)
            {
                return (block[start], end - start, end);
            }
        }

        return null;
    }
}
