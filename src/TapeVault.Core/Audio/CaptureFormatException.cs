namespace TapeVault.Core.Audio;

/// <summary>
/// A capture file cannot be read as audio. The message is one user-facing sentence that says what is wrong.
/// </summary>
public sealed class CaptureFormatException : Exception
{
    /// <summary>Creates the exception with a generic message.</summary>
    public CaptureFormatException()
        : base("The file is not a readable WAV capture.")
    {
    }

    /// <summary>Creates the exception with a user-facing message.</summary>
    public CaptureFormatException(string message)
        : base(message)
    {
    }

    /// <summary>Creates the exception with a user-facing message and the low-level cause.</summary>
    public CaptureFormatException(string message, Exception innerException)
        : base(message, innerException)
    {
    }
}
