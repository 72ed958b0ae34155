namespace TapeVault.Archive.Ingest;

/// <summary>Checks names that come from outside (uploads, tape headers) before they are shown or stored.</summary>
public static class SafeNames
{
    public const int MaxFileNameLength = 200;

    /// <summary>Returns the reason a file name is refused, or null when it is acceptable.</summary>
    public static string? FileNameProblem(string? name)
    {
        if (string.IsNullOrWhiteSpace(name))
        {
            return "The file name is empty.";
        }

        if (name.Length > MaxFileNameLength)
        {
            return $"The file name is longer than {MaxFileNameLength} characters.";
        }

        if (name.Contains('/', StringComparison.Ordinal) || name.Contains('\\', StringComparison.Ordinal))
        {
            return "The file name contains a path separator; send the name of the file alone.";
        }

        if (name.Contains("..", StringComparison.Ordinal))
        {
            return "The file name contains '..', which is not allowed.";
        }

        if (name.Any(char.IsControl))
        {
            return "The file name contains control characters.";
        }

        // UAX #9 and UTS #39: a character that reorders the text or shows nothing makes a name look like another one.
        if (TapeVault.Core.Text.VisibleNames.FirstHidden(name) is { } hidden)
        {
            return $"The file name contains an invisible or direction-changing character ({hidden}), which would make it look like another name.";
        }

        if (name.Trim() is "." or "")
        {
            return "The file name is not a name.";
        }

        return null;
    }
}
