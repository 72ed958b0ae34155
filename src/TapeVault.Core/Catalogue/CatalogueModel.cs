using TapeVault.Core.Image;

namespace TapeVault.Core.Catalogue;

/// <summary>A published collection: what the catalogue shows, gathered by the archive; no database types in here.</summary>
public sealed record CatalogueSite(
    string CollectionName,
    string CollectionDescriptionMarkdown,
    string SourceOrganization,
    DateTimeOffset PublishedUtc,
    IReadOnlyList<CatalogueItem> Items);

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

/// <summary>A histogram of pulse lengths (microseconds), with the profile's pulse classes and the decision boundaries between them.</summary>
public sealed record PulseHistogram(
    double BinMicroseconds,
    double FirstBinMicroseconds,
    IReadOnlyList<long> Counts,
    IReadOnlyList<(string Name, double Microseconds)> Classes,
    IReadOnlyList<double> BoundariesMicroseconds,
    string Source);
