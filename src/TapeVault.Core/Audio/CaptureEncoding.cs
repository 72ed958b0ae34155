namespace TapeVault.Core.Audio;

/// <summary>Sample encodings <see cref="CaptureWriter"/> can write.</summary>
public enum CaptureEncoding
{
    /// <summary>8-bit unsigned PCM.</summary>
    Pcm8,

    /// <summary>16-bit signed PCM.</summary>
    Pcm16,

    /// <summary>24-bit signed PCM.</summary>
    Pcm24,

    /// <summary>32-bit IEEE float.</summary>
    [System.Diagnostics.CodeAnalysis.SuppressMessage("Naming", "CA1720:Identifier contains type name", Justification = "Float32 names the sample encoding, as sox and WAV tools do.")]
    Float32,
}
