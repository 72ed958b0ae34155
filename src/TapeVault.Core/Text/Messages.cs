namespace TapeVault.Core.Text;

/// <summary>Shared rules for the sentences TapeVault shows people.</summary>
public static class Messages
{
    /// <summary>
    /// A message as one line: a name or value from a file (a JSON escape such as \n makes any character) or a path may
    /// hold control characters, which are shown as \u escapes instead.
    /// </summary>
    public static string OneLine(string message)
    {
        ArgumentNullException.ThrowIfNull(message);
        if (!message.Any(char.IsControl))
        {
            return message;
        }

        var text = new System.Text.StringBuilder(message.Length + 16);
        foreach (char c in message)
        {
            if (char.IsControl(c))
            {
                text.Append($"\\u{(int)c:x4}");
            }
            else
            {
                text.Append(c);
            }
        }

        return text.ToString();
    }
}
