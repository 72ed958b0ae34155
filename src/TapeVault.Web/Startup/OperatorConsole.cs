namespace TapeVault.Web.Startup;

/// <summary>
/// Where the app speaks to whoever started it (the first curator's one-time password, the organisation not yet set):
/// standard output for a real start, a writer of its own for each app a test starts, so that apps started side by
/// side never hear each other.
/// </summary>
public sealed class OperatorConsole(TextWriter writer)
{
    public Task SayAsync(string text) => writer.WriteLineAsync(text);
}
