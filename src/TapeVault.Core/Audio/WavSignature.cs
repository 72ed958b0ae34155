namespace TapeVault.Core.Audio;

/// <summary>
/// The first twelve bytes of a WAV file: "RIFF" (or "RF64" / "BW64"), a size, "WAVE"; or the "fLaC" marker of a FLAC
/// file (RFC 9639). Enough to refuse a file that is neither before the rest of it arrives; the whole header is checked
/// once the file is in.
/// </summary>
public static class WavSignature
{
    public const int Length = 12;

    /// <summary>
    /// One sentence saying why <paramref name="head"/> cannot start a WAV file, or null when it can. Fewer than
    /// <see cref="Length"/> bytes mean the file ended there.
    /// </summary>
    public static string? Problem(ReadOnlySpan<byte> head, long fileLength)
    {
        if (head.Length == 0)
        {
            return "The file is empty (0 bytes), so it is not a WAV file.";
        }

        if (head.Length >= 4 && head[..4].SequenceEqual("fLaC"u8))
        {
            return null;
        }

        bool riff = head.Length >= 4 && head[..4].SequenceEqual("RIFF"u8);
        bool rf64 = head.Length >= 4 && (head[..4].SequenceEqual("RF64"u8) || head[..4].SequenceEqual("BW64"u8));
        if (!riff && !rf64)
        {
            return "The file is not a WAV file (no RIFF header) and not a FLAC file (no fLaC marker).";
        }

        if (head.Length < Length)
        {
            return $"The file is too short to be a WAV file ({fileLength} bytes; it ends inside the RIFF header).";
        }

        return head[8..12].SequenceEqual("WAVE"u8)
            ? null
            : $"The file is a RIFF file but not a WAV file (its form type is '{WavHeaderProbe.Printable(head[8..12])}', not 'WAVE').";
    }
}
