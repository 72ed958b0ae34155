using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Image;

namespace TapeVault.Core.Merge;

/// <summary>
/// One capture's contribution to a merge: every candidate of every detector setting, already given positions within
/// the capture by <see cref="BlockPositioner"/>. Only the candidates' stored fields are read, so a pass can be rebuilt
/// from the archive as well as taken from a live decode.
/// </summary>
public sealed record MergePass(ImageSource Capture, IReadOnlyList<BlockCandidate> Candidates, string CodeVersion)
{
    /// <summary>A pass from a decode; <paramref name="fileName"/> is the capture's file name as the user knows it.</summary>
    public static MergePass From(DecodeResult result, string fileName)
    {
        ArgumentNullException.ThrowIfNull(result);
        var c = result.Capture;
        return new MergePass(new ImageSource(c.Sha256, fileName, c.SampleRate, c.Channels, c.DurationSeconds), result.Candidates, result.CodeVersion);
    }
}

/// <summary>Bounds of the merge's work.</summary>
public sealed record MergeOptions
{
    /// <summary>How many of the least certain bits the repair search may flip, in every combination (2^k trials at most).</summary>
    public int RepairBits { get; init; } = 12;

    /// <summary>The most checksum trials the repair search makes for one position, the plain vote included.</summary>
    public int MaximumTrials { get; init; } = 4096;

    /// <summary>The time the image records as its making; null for now.</summary>
    public DateTimeOffset? CreatedUtc { get; init; }
}
