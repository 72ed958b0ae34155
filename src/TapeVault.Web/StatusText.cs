namespace TapeVault.Web;

/// <summary>
/// How a block's status reads on every page and plot: a symbol and a word, so that no status is told by colour alone.
/// Covers a reading's status (clean, failed, unchecked), an image position's (voted, repaired, missing) and "none"
/// for a setting that read nothing there.
/// </summary>
public static class StatusText
{
    public static (string Symbol, string Word) Of(string status) => status switch
    {
        "clean" => ("✓", "clean"),
        "failed" => ("✗", "failed"),
        "unchecked" => ("○", "no checksum"),
        "voted" => ("≈", "voted"),
        "repaired" => ("⚒", "repaired"),
        "missing" => ("–", "missing"),
        "none" => ("·", "not read"),
        _ => ("?", status),
    };

    public static string Symbol(string status) => Of(status).Symbol;

    public static string Word(string status) => Of(status).Word;
}
