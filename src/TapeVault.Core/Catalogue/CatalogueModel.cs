using TapeVault.Core.Image;

namespace TapeVault.Core.Catalogue;

/// <summary>A published collection: what the catalogue shows, gathered by the archive; no database types in here.</summary>
/// <param name="EventChainHead">The archive's event chain head when the catalogue was made ("event N sha256:…"), if any.</param>
public sealed record CatalogueSite(
    string CollectionName,
    string CollectionDescriptionMarkdown,
    string? SourceOrganization,
    DateTimeOffset PublishedUtc,
    IReadOnlyList<CatalogueItem> Items,
    string? EventChainHead = null);

public sealed record CatalogueItem(
    string AccessionNumber,
    string Title,
    string Side,
    string LabelText,
    string DescriptionMarkdown,
    IReadOnlyList<CatalogueCapture> Captures,
    CatalogueImage? Image,
    PulseHistogram? Histogram);

/// <summary>One capture of the item, for the provenance table.</summary>
public sealed record CatalogueCapture(string FileName, string Sha256, long Size, int SampleRate, int Channels, int BitsPerSample, double DurationSeconds, string Deck, string Operator, DateOnly? CapturedOn);

/// <summary>The newest tape image of the item: its container's hash, and the image itself for the block map and files.</summary>
public sealed record CatalogueImage(int Version, string Sha256, long Size, TapeImage Image);

/// <summary>
/// A histogram of pulse lengths over one capture (log-spaced bins, edges in microseconds), with the profile's durations
/// and the decoder's decision boundaries marked where they fall in that capture.
/// </summary>
public sealed record PulseHistogram(
    IReadOnlyList<double> BinEdgesMicroseconds,
    IReadOnlyList<long> Counts,
    IReadOnlyList<HistogramMark> Marks,
    string Source);

/// <summary>A marked duration: a pulse class or tone the format writes, or (<c>Boundary</c>) where one class ends and the next begins.</summary>
public sealed record HistogramMark(string Label, double Microseconds, bool Boundary);
