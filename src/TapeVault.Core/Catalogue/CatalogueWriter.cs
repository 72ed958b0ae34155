using System.Globalization;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using CsvHelper;
using TapeVault.Core.Image;

using TapeVault.Core.Text;
using TapeVault.Core.Timeline;

namespace TapeVault.Core.Catalogue;

/// <summary>
/// Writes a collection's public catalogue as a static site that works opened from disk: index.html, one page per item,
/// catalogue.css, catalogue.json, catalogue.csv and SHA256SUMS over every other file (for GNU sha256sum -c). No
/// scripts, no fonts, nothing fetched: plots are inline SVG with a table behind each.
/// </summary>
public static class CatalogueWriter
{
    public const string ConfidenceExplanation = Vocabulary.ConfidenceSentence;

    /// <summary>The site's checksum file: the SHA-256 of every other file, in GNU sha256sum's format.</summary>
    public const string ChecksumFile = "SHA256SUMS";

    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;
    private static readonly UTF8Encoding Utf8 = new(encoderShouldEmitUTF8Identifier: false);
    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web) { WriteIndented = true };

    /// <summary>Writes the site into <paramref name="folder"/> (created; must be empty) and returns the relative paths written.</summary>
    public static IReadOnlyList<string> Write(CatalogueSite site, string folder)
    {
        ArgumentNullException.ThrowIfNull(site);
        ArgumentException.ThrowIfNullOrEmpty(folder);
        var root = Path.GetFullPath(folder);
        if (Directory.Exists(root) && Directory.EnumerateFileSystemEntries(root).Any())
        {
            throw new IOException($"The folder {root} is not empty; publish into a new folder.");
        }

        Directory.CreateDirectory(Path.Combine(root, "items"));
        var files = new List<string>();
        void Put(string relative, string text)
        {
            File.WriteAllText(Path.Combine(root, relative.Replace('/', Path.DirectorySeparatorChar)), text, Utf8);
            files.Add(relative);
        }

        var pages = PageNames(site.Items);
        Put("catalogue.css", Css);
        Put("index.html", Index(site, pages));
        for (int i = 0; i < site.Items.Count; i++)
        {
            Put($"items/{pages[i]}", ItemPage(site, site.Items[i]));
        }

        Put("catalogue.json", JsonSerializer.Serialize(JsonModel(site, pages), Json));
        Put("catalogue.csv", Csv(site));

        var sums = new StringBuilder();
        foreach (var relative in files.Order(StringComparer.Ordinal))
        {
            var hash = Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(Path.Combine(root, relative))));
            sums.Append(Invariant, $"{hash}  {relative}\n");
        }

        File.WriteAllText(Path.Combine(root, ChecksumFile), sums.ToString(), Utf8);
        files.Add(ChecksumFile);
        return files;
    }

    /// <summary>Counts of an image's positions by status, and the mean confidence of those recovered.</summary>
    public static (int Clean, int Voted, int Repaired, int Missing, int Conflicts, double Overall) Summary(TapeImage image)
    {
        ArgumentNullException.ThrowIfNull(image);
        return (image.Count(RecoveryStatus.Clean), image.Count(RecoveryStatus.Voted), image.Count(RecoveryStatus.Repaired),
            image.Count(RecoveryStatus.Missing), image.Blocks.Count(b => b.Conflict), image.OverallConfidence);
    }

    public static string FileSafe(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        var cleaned = new string([.. name.Select(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' ? c : '_')]);
        return cleaned.Length == 0 ? "_" : cleaned.Length > 100 ? cleaned[..100] : cleaned;
    }

    private static List<string> PageNames(IReadOnlyList<CatalogueItem> items)
    {
        var used = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        var names = new List<string>();
        foreach (var item in items)
        {
            var stem = FileSafe(item.AccessionNumber);
            var name = $"{stem}.html";
            for (int n = 2; !used.Add(name); n++)
            {
                name = $"{stem}-{n}.html";
            }

            names.Add(name);
        }

        return names;
    }

    private static string E(string? text) => WebUtility.HtmlEncode(text ?? string.Empty);

    /// <summary>The archive's organisation as the publisher (Dublin Core), when the archive has named it.</summary>
    private static (string Name, string Content)[] Publisher(CatalogueSite site) =>
        string.IsNullOrWhiteSpace(site.SourceOrganization) ? [] : [("DCTERMS.publisher", site.SourceOrganization)];

    private static string F(double value, string format = "0.000") => value.ToString(format, Invariant);

    private static string Head(string title, string cssPath, IEnumerable<(string Name, string Content)> meta)
    {
        var b = new StringBuilder();
        b.Append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
        b.Append(Invariant, $"<title>{E(title)}</title>\n");
        b.Append("<link rel=\"schema.DCTERMS\" href=\"http://purl.org/dc/terms/\">\n");
        foreach (var (name, content) in meta)
        {
            b.Append(Invariant, $"<meta name=\"{E(name)}\" content=\"{E(content)}\">\n");
        }

        b.Append(Invariant, $"<link rel=\"stylesheet\" href=\"{cssPath}\">\n</head>\n<body>\n");
        return b.ToString();
    }

    private static string Index(CatalogueSite site, List<string> pages)
    {
        var b = new StringBuilder(Head(site.CollectionName, "catalogue.css",
        [
            ("DCTERMS.title", site.CollectionName),
            .. Publisher(site),
            ("DCTERMS.issued", site.PublishedUtc.ToString("yyyy-MM-dd", Invariant)),
            ("DCTERMS.type", "Collection"),
        ]));
        b.Append(Invariant, $"<header>{(site.SourceOrganization is { } org ? $"<p class=\"org\">{E(org)}</p>" : string.Empty)}<h1>{E(site.CollectionName)}</h1></header>\n<main>\n");
        b.Append(Invariant, $"<div class=\"description\">{SafeMarkdown.ToHtml(site.CollectionDescriptionMarkdown)}</div>\n");
        b.Append(Invariant, $"<p class=\"explain\">{E(ConfidenceExplanation)}</p>\n");
        b.Append("<table>\n<caption>Tapes in this collection</caption>\n<thead><tr><th scope=\"col\">Accession number</th><th scope=\"col\">Title</th><th scope=\"col\">Blocks clean / voted / repaired / missing</th><th scope=\"col\">Overall confidence</th></tr></thead>\n<tbody>\n");
        for (int i = 0; i < site.Items.Count; i++)
        {
            var item = site.Items[i];
            string blocks = "no image yet";
            string overall = "—";
            if (item.Image is { } image)
            {
                var s = Summary(image.Image);
                blocks = $"{s.Clean} / {s.Voted} / {s.Repaired} / {s.Missing}";
                overall = F(s.Overall);
            }

            b.Append(Invariant, $"<tr><td><a href=\"items/{pages[i]}\">{E(item.AccessionNumber)}</a></td><td>{E(item.Title)}</td><td class=\"num\">{blocks}</td><td class=\"num\">{overall}</td></tr>\n");
        }

        b.Append("</tbody>\n</table>\n");
        b.Append(Invariant, $"<p class=\"small\">Published {site.PublishedUtc:yyyy-MM-dd HH:mm} UTC with TapeVault. Also as <a href=\"catalogue.json\">catalogue.json</a> and <a href=\"catalogue.csv\">catalogue.csv</a>; every file's SHA-256 is in <a href=\"SHA256SUMS\">SHA256SUMS</a>.</p>\n");
        b.Append("</main>\n</body>\n</html>\n");
        return b.ToString();
    }

    private static string ItemPage(CatalogueSite site, CatalogueItem item)
    {
        List<(string, string)> meta =
        [
            ("DCTERMS.title", item.Title),
            ("DCTERMS.identifier", item.AccessionNumber),
            ("DCTERMS.isPartOf", site.CollectionName),
            .. Publisher(site),
            ("DCTERMS.type", "Dataset"),
            ("DCTERMS.description", string.IsNullOrWhiteSpace(item.LabelText) ? item.Title : $"Label: {item.LabelText}"),
            ("DCTERMS.provenance", $"Recovered by TapeVault from {item.Captures.Count} audio capture(s) of the tape."),
        ];
        if (item.Captures.Select(c => c.CapturedOn).Where(d => d is not null).Min() is { } first)
        {
            meta.Add(("DCTERMS.created", first.ToString("yyyy-MM-dd", Invariant)));
        }

        if (item.Image is { } im)
        {
            meta.Add(("DCTERMS.format", "application/vnd.tapevault.image"));
            meta.Add(("DCTERMS.extent", $"{im.Size} bytes"));
        }

        var b = new StringBuilder(Head($"{item.AccessionNumber} {item.Title}", "../catalogue.css", meta));
        b.Append(Invariant, $"<header><p class=\"org\"><a href=\"../index.html\">{E(site.CollectionName)}</a></p><h1><span class=\"accession\">{E(item.AccessionNumber)}</span> {E(item.Title)}</h1></header>\n<main>\n");
        b.Append("<dl class=\"facts\">");
        b.Append(Invariant, $"<dt>Accession number</dt><dd>{E(item.AccessionNumber)}</dd><dt>Side</dt><dd>{E(item.Side)}</dd>");
        if (!string.IsNullOrWhiteSpace(item.LabelText))
        {
            b.Append(Invariant, $"<dt>Label</dt><dd>{E(item.LabelText)}</dd>");
        }

        b.Append("</dl>\n");
        b.Append(Invariant, $"<section><h2>Description</h2><div class=\"description\">{SafeMarkdown.ToHtml(item.DescriptionMarkdown)}</div></section>\n");
        if (item.Image is { } image)
        {
            AppendImage(b, image);
        }
        else
        {
            b.Append("<section><h2>Recovery</h2><p>No tape image has been made of this tape yet.</p></section>\n");
        }

        if (item.Histogram is { } histogram)
        {
            AppendHistogram(b, histogram);
        }

        b.Append("<section><h2>Provenance</h2><p>The audio captures the image was recovered from. Each original is kept unchanged; its SHA-256 identifies it.</p>\n<table><caption>Captures</caption><thead><tr><th scope=\"col\">File</th><th scope=\"col\">SHA-256</th><th scope=\"col\">Audio</th><th scope=\"col\">Deck</th><th scope=\"col\">Operator</th><th scope=\"col\">Captured on</th></tr></thead><tbody>\n");
        foreach (var c in item.Captures)
        {
            b.Append(Invariant, $"<tr><td>{E(c.FileName)}</td><td><code>{c.Sha256}</code></td><td>{c.SampleRate} Hz, {c.BitsPerSample}-bit, {c.Channels} ch, {F(c.DurationSeconds, "0.0")} s, {c.Size} bytes</td><td>{E(c.Deck)}</td><td>{E(c.Operator)}</td><td>{(c.CapturedOn is { } d ? d.ToString("yyyy-MM-dd", Invariant) : "—")}</td></tr>\n");
        }

        b.Append("</tbody></table></section>\n</main>\n</body>\n</html>\n");
        return b.ToString();
    }

    private static void AppendImage(StringBuilder b, CatalogueImage image)
    {
        var s = Summary(image.Image);
        b.Append("<section><h2>Recovery</h2>\n");
        b.Append(Invariant, $"<p class=\"summary\"><span data-count=\"clean\">{s.Clean}</span> clean, <span data-count=\"voted\">{s.Voted}</span> voted, <span data-count=\"repaired\">{s.Repaired}</span> repaired, <span data-count=\"missing\">{s.Missing}</span> missing of {image.Image.Blocks.Length} block(s); overall confidence <span data-count=\"overall\">{F(s.Overall)}</span>.</p>\n");
        b.Append(Invariant, $"<p class=\"explain\">{E(ConfidenceExplanation)} Clean blocks passed their checksum; voted blocks were put together from several captures; repaired blocks had their least certain bits corrected until the checksum held; missing blocks could not be read from any capture and are left empty, never filled in.</p>\n");
        b.Append(Invariant, $"<p>Tape image version {image.Version}: {image.Size} bytes, SHA-256 <code>{image.Sha256}</code>.</p>\n");
        AppendBlockMap(b, image.Image);
        if (image.Image.Files.Length > 0)
        {
            b.Append("<h3>Files on the tape</h3>\n<table><caption>Files named by the block headers</caption><thead><tr><th scope=\"col\">Name</th><th scope=\"col\">Bytes</th><th scope=\"col\">Blocks</th><th scope=\"col\">Complete</th></tr></thead><tbody>\n");
            foreach (var f in image.Image.Files)
            {
                b.Append(Invariant, $"<tr><td><code>{E(f.Name)}</code></td><td class=\"num\">{f.Length}</td><td class=\"num\">{f.BlockCount}</td><td>{(f.Complete ? "yes" : "no")}</td></tr>\n");
            }

            b.Append("</tbody></table>\n");
        }

        b.Append("<h3>Checksums</h3>\n<table><caption>SHA-256 of each block's bytes in the image</caption><thead><tr><th scope=\"col\">Position</th><th scope=\"col\">Block</th><th scope=\"col\">Status</th><th scope=\"col\">Confidence</th><th scope=\"col\">SHA-256 of the payload</th></tr></thead><tbody>\n");
        foreach (var block in image.Image.Blocks)
        {
            var hash = block.Status == RecoveryStatus.Missing ? "—" : $"<code>{Convert.ToHexStringLower(SHA256.HashData(block.Payload.AsSpan()))}</code>";
            b.Append(Invariant, $"<tr><td class=\"num\">{block.Position}</td><td><code>{E(block.Key)}</code></td><td>{Word(block.Status)}</td><td class=\"num\">{F(block.Confidence)}</td><td>{hash}</td></tr>\n");
        }

        b.Append("</tbody></table>\n</section>\n");
    }

    private static string Word(RecoveryStatus status) => Vocabulary.Of(status).Word;

    /// <summary>The same tape timeline as the web app's tape page, drawn from the image alone.</summary>
    private static void AppendBlockMap(StringBuilder b, TapeImage image)
    {
        b.Append("<h3>Tape timeline</h3>\n<p class=\"small\">Tape time runs from left to right. The top lane is the image, one bar per block; below it, each capture's lane shows the readings the image took from it, where they lay on the tape. The shape tells the outcome and paler means less confident; the table below says the same in words.</p>\n");
        b.Append("<div class=\"timeline-scroll\">");
        b.Append(TimelineSvg.Render(TapeTimeline.FromImage(image), null, title: "Tape timeline"));
        b.Append("</div>\n");
    }

    private static void AppendHistogram(StringBuilder b, PulseHistogram h)
    {
        const int width = 640;
        const int height = 220;
        const int left = 50;
        const int right = 10;
        const int bottom = 30;
        const int top = 16;
        if (h.Counts.Count == 0 || h.BinEdgesMicroseconds.Count != h.Counts.Count + 1)
        {
            return;
        }

        long max = Math.Max(1, h.Counts.Max());
        double lowLog = Math.Log(h.BinEdgesMicroseconds[0]);
        double highLog = Math.Log(h.BinEdgesMicroseconds[^1]);
        double Xof(double us) => left + ((Math.Log(Math.Max(us, 1e-9)) - lowLog) / (highLog - lowLog) * (width - left - right));
        b.Append("<section><h2>Pulse lengths</h2>\n");
        b.Append(Invariant, $"<p class=\"small\">How long the pulses read from the tape were ({E(h.Source)}), on a logarithmic axis. Dashed lines: the durations the format writes; dotted lines: where the decoder's decision changes from one to the next. Tidy peaks on the dashed lines mean a healthy read.</p>\n");
        b.Append(Invariant, $"<svg class=\"histogram\" role=\"img\" aria-labelledby=\"hist-title\" width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" xmlns=\"http://www.w3.org/2000/svg\">\n<title id=\"hist-title\">Histogram of pulse lengths in microseconds</title>\n");
        for (int i = 0; i < h.Counts.Count; i++)
        {
            double x0 = Xof(h.BinEdgesMicroseconds[i]);
            double x1 = Xof(h.BinEdgesMicroseconds[i + 1]);
            double barHeight = (height - bottom - top) * (double)h.Counts[i] / max;
            b.Append(Invariant, $"<rect x=\"{F(x0, "0.0")}\" y=\"{F(height - bottom - barHeight, "0.0")}\" width=\"{F(Math.Max(x1 - x0 - 0.3, 0.3), "0.0")}\" height=\"{F(barHeight, "0.0")}\" fill=\"#4a5d6b\"/>\n");
        }

        foreach (var mark in h.Marks)
        {
            double x = Xof(mark.Microseconds);
            if (x < left || x > width - right)
            {
                continue;
            }

            b.Append(mark.Boundary
                ? string.Create(Invariant, $"<line x1=\"{F(x, "0.0")}\" y1=\"{top}\" x2=\"{F(x, "0.0")}\" y2=\"{height - bottom}\" stroke=\"#9a3b2e\" stroke-dasharray=\"1 3\"><title>{E(mark.Label)}: {F(mark.Microseconds, "0")} µs</title></line>\n")
                : string.Create(Invariant, $"<line x1=\"{F(x, "0.0")}\" y1=\"{top}\" x2=\"{F(x, "0.0")}\" y2=\"{height - bottom}\" stroke=\"#3d6b4f\" stroke-dasharray=\"5 3\"/><text x=\"{F(x + 3, "0.0")}\" y=\"{top - 4}\" font-size=\"11\">{E(mark.Label)}</text>\n"));
        }

        b.Append(Invariant, $"<line x1=\"{left}\" y1=\"{height - bottom}\" x2=\"{width - right}\" y2=\"{height - bottom}\" stroke=\"#23303a\"/>");
        b.Append(Invariant, $"<text x=\"{left}\" y=\"{height - 8}\" font-size=\"11\">{F(h.BinEdgesMicroseconds[0], "0")} µs</text><text x=\"{width - 90}\" y=\"{height - 8}\" font-size=\"11\">{F(h.BinEdgesMicroseconds[^1], "0")} µs</text>");
        b.Append(Invariant, $"<text x=\"4\" y=\"{top + 10}\" font-size=\"11\">{max}</text>\n</svg>\n");
        b.Append("<details><summary>The histogram as a table</summary><table><caption>Pulses per length bin</caption><thead><tr><th scope=\"col\">From (µs)</th><th scope=\"col\">To (µs)</th><th scope=\"col\">Pulses</th></tr></thead><tbody>\n");
        for (int i = 0; i < h.Counts.Count; i++)
        {
            if (h.Counts[i] > 0)
            {
                b.Append(Invariant, $"<tr><td class=\"num\">{F(h.BinEdgesMicroseconds[i], "0.0")}</td><td class=\"num\">{F(h.BinEdgesMicroseconds[i + 1], "0.0")}</td><td class=\"num\">{h.Counts[i]}</td></tr>\n");
            }
        }

        b.Append("</tbody></table>\n<table><caption>Marked durations</caption><thead><tr><th scope=\"col\">Mark</th><th scope=\"col\">µs</th></tr></thead><tbody>\n");
        foreach (var mark in h.Marks)
        {
            b.Append(Invariant, $"<tr><td>{E(mark.Label)}{(mark.Boundary ? " (decision boundary)" : string.Empty)}</td><td class=\"num\">{F(mark.Microseconds, "0.0")}</td></tr>\n");
        }

        b.Append("</tbody></table></details>\n</section>\n");
    }

    private static object JsonModel(CatalogueSite site, List<string> pages) => new
    {
        collection = site.CollectionName,
        sourceOrganization = site.SourceOrganization,
        publishedUtc = site.PublishedUtc,
        eventChainHead = site.EventChainHead,
        confidenceExplanation = ConfidenceExplanation,
        items = site.Items.Select((item, i) =>
        {
            var s = item.Image is { } im ? Summary(im.Image) : default;
            return new
            {
                accessionNumber = item.AccessionNumber,
                title = item.Title,
                side = item.Side,
                label = item.LabelText,
                page = $"items/{pages[i]}",
                image = item.Image is { } image
                    ? new
                    {
                        version = image.Version,
                        sha256 = image.Sha256,
                        size = image.Size,
                        blocks = image.Image.Blocks.Length,
                        clean = s.Clean,
                        voted = s.Voted,
                        repaired = s.Repaired,
                        missing = s.Missing,
                        conflicts = s.Conflicts,
                        overallConfidence = s.Overall,
                        files = image.Image.Files.Select(f => new { name = f.Name, length = f.Length, complete = f.Complete }),
                    }
                    : null,
                captures = item.Captures.Select(c => new { fileName = c.FileName, sha256 = c.Sha256, deck = c.Deck, @operator = c.Operator, capturedOn = c.CapturedOn }),
            };
        }),
    };

    /// <summary>
    /// The options of catalogue.csv. RFC 4180 (CRLF line ends, quotes doubled inside quoted fields) and OWASP's
    /// CSV Injection guidance (owasp.org/www-community/attacks/CSV_Injection): a text cell that starts with =, +, -, @,
    /// tab or carriage return gets a single quote in front so a spreadsheet shows it as text, never runs it as a formula,
    /// and every cell is quoted, so a separator or quote inside a cell cannot start a new cell in a reader that splits
    /// on ';'. Names read from a tape's own headers go through the same cells. Numbers we format ourselves are not text.
    /// </summary>
    public static CsvWriterOptions CsvOptions { get; } = CsvWriterOptions.Default with
    {
        Injection = CsvInjection.Escape,
        InjectionEscape = '\'',
        Quoting = CsvQuoting.Always,
        NewLine = "\r\n",
    };

    /// <summary>The columns of catalogue.csv, in order.</summary>
    public static IReadOnlyList<string> CsvColumns { get; } =
        ["accession_number", "title", "side", "blocks", "clean", "voted", "repaired", "missing", "conflicts", "overall_confidence", "image_sha256", "files"];

    /// <summary>catalogue.csv: one row per item.</summary>
    public static string Csv(CatalogueSite site)
    {
        ArgumentNullException.ThrowIfNull(site);
        using var text = new StringWriter(Invariant);
        using (var csv = CsvWriter.Create(text, CsvOptions, false))
        {
            foreach (var column in CsvColumns)
            {
                csv.WriteField(column);
            }

            csv.EndRecord();
            foreach (var item in site.Items)
            {
                csv.WriteField(item.AccessionNumber);
                csv.WriteField(item.Title);
                csv.WriteField(item.Side);
                if (item.Image is { } im)
                {
                    var s = Summary(im.Image);
                    csv.WriteField(im.Image.Blocks.Length);
                    csv.WriteField(s.Clean);
                    csv.WriteField(s.Voted);
                    csv.WriteField(s.Repaired);
                    csv.WriteField(s.Missing);
                    csv.WriteField(s.Conflicts);
                    csv.WriteField(s.Overall, "0.000000");
                    csv.WriteField(im.Sha256);
                    csv.WriteField(string.Join(";", im.Image.Files.Select(f => f.Name)));
                }
                else
                {
                    for (int i = 0; i < 6; i++)
                    {
                        csv.WriteField(0);
                    }

                    csv.WriteField(string.Empty);
                    csv.WriteField(string.Empty);
                    csv.WriteField(string.Empty);
                }

                csv.EndRecord();
            }
        }

        return text.ToString();
    }

    private const string Css = """
        .timeline-scroll { overflow-x: auto; background: #fffdf8; border: 1px solid #d9d4c7; padding: .3rem; }
        svg.timeline { display: block; font-family: inherit; }
        body { margin: 0 auto; max-width: 60rem; padding: 1rem 1.5rem 3rem; font: 16px/1.5 system-ui, sans-serif; background: #f6f4ee; color: #23303a; }
        header { border-bottom: 2px solid #d9d4c7; margin-bottom: 1rem; }
        .org { color: #5d6a73; margin: 0; }
        h1 { margin: .2rem 0 .6rem; }
        h2 { border-bottom: 1px solid #d9d4c7; margin-top: 2rem; }
        .accession { font-family: ui-monospace, monospace; border: 1px solid #d9d4c7; padding: 0 .3rem; }
        table { border-collapse: collapse; width: 100%; background: #fffdf8; margin: .5rem 0 1rem; }
        th, td { text-align: left; padding: .35rem .5rem; border-bottom: 1px solid #d9d4c7; vertical-align: top; }
        caption { text-align: left; font-weight: 600; padding: .3rem 0; }
        .num { text-align: right; font-variant-numeric: tabular-nums; }
        code { font-family: ui-monospace, monospace; font-size: .85rem; word-break: break-all; }
        .explain, .small { color: #5d6a73; font-size: .92rem; }
        .facts { display: grid; grid-template-columns: max-content 1fr; gap: .2rem 1rem; }
        .facts dt { font-weight: 600; color: #5d6a73; }
        .facts dd { margin: 0; }
        svg { background: #fffdf8; border: 1px solid #d9d4c7; max-width: 100%; height: auto; }
        a { color: #1f5fa8; }
        """;
}
