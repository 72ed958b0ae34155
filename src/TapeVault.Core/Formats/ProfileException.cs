namespace TapeVault.Core.Formats;

/// <summary>A profile that cannot be used, with a message naming the field and what is wrong with it.</summary>
public sealed class ProfileException : Exception
{
    public ProfileException(string message)
        : base(message)
    {
    }

    public ProfileException(string message, Exception inner)
        : base(message, inner)
    {
    }

    public ProfileException()
    {
    }
}
