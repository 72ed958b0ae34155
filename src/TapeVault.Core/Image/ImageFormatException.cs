namespace TapeVault.Core.Image;

/// <summary>
/// A tape image container cannot be read: it is damaged, truncated, not a container at all, or of a format version
/// this reader does not know. The message is one user-facing sentence that says which.
/// </summary>
public sealed class ImageFormatException : Exception
{
    public ImageFormatException()
        : base("The file is not a readable TapeVault image.")
    {
    }

    public ImageFormatException(string message)
        : base(message)
    {
    }

    public ImageFormatException(string message, Exception innerException)
        : base(message, innerException)
    {
    }
}
