using TapeVault.Core.Text;

namespace TapeVault.Web;

/// <summary>
/// How a block's status reads on every page and plot: the symbol and word of Core's one table
/// (<see cref="Vocabulary"/>), so that no status is told by colour alone and the pages say what the command line,
/// the JSON and the catalogue say.
/// </summary>
public static class StatusText
{
    public static (string Symbol, string Word) Of(string status)
    {
        var term = Vocabulary.Of(status);
        return (term.Symbol, term.Word);
    }

    public static string Symbol(string status) => Vocabulary.Of(status).Symbol;

    public static string Word(string status) => Vocabulary.Of(status).Word;
}
