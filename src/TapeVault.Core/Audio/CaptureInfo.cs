namespace TapeVault.Core.Audio;

/// <summary>
/// What TapeVault records about one WAV capture once it has been read to the end.
/// </summary>
/// <param name="Sha256">Lower-case hex SHA-256 of every byte of the file (equal to <c>sha256sum</c>).</param>
/// <param name="FileBytes">Size of the file in bytes.</param>
/// <param name="SampleRate">Sample frames per second.</param>
/// <param name="Channels">Channels stored in the file (1 to 8).</param>
/// <param name="BitsPerSample">Container bits per sample: 8, 16, 24, 32 or 64.</param>
/// <param name="Encoding"><c>"pcm"</c> or <c>"float"</c>.</param>
/// <param name="FrameCount">Whole sample frames actually present in the file.</param>
/// <param name="DurationSeconds"><paramref name="FrameCount"/> divided by <paramref name="SampleRate"/>.</param>
public sealed record CaptureInfo(
    string Sha256,
    long FileBytes,
    int SampleRate,
    int Channels,
    int BitsPerSample,
    string Encoding,
    long FrameCount,
    double DurationSeconds)
{
    /// <summary>
    /// True when the data chunk's header claims more audio than the file holds: the capture is cut off (a copy that
    /// stopped early, a recorder that never closed the file), and only the audio that is there was read.
    /// </summary>
    public bool Truncated { get; init; }

    /// <summary>The container: <c>"wav"</c> (RIFF), <c>"rf64"</c>, <c>"bw64"</c> or <c>"flac"</c>.</summary>
    public string Container { get; init; } = "wav";

    /// <summary>The metadata chunks the file carries (Broadcast WAV bext and iXML, FLAC comments).</summary>
    public CaptureMetadata Metadata { get; init; } = CaptureMetadata.None;

    /// <summary>
    /// One sentence when the audio did not match the digest the file carries (a FLAC file's STREAMINFO MD5), else
    /// null: a fixity finding for the archive to record, not a reason to stop decoding.
    /// </summary>
    public string? FixityFinding { get; init; }
}
