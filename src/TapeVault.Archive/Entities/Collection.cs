namespace TapeVault.Archive.Entities;

/// <summary>A holding of tapes from one source (a club's shelf, a donor's box).</summary>
public sealed class Collection
{
    public int Id { get; set; }

    public required string Name { get; set; }

    public string Description { get; set; } = string.Empty;

    public DateTimeOffset CreatedUtc { get; set; }

    public List<TapeItem> Items { get; set; } = [];
}

/// <summary>One side of one physical tape, under the accession number the holding institution gave it.</summary>
public sealed class TapeItem
{
    public int Id { get; set; }

    public int CollectionId { get; set; }

    public Collection? Collection { get; set; }

    public required string AccessionNumber { get; set; }

    public required string Title { get; set; }

    /// <summary>What the label says, transcribed as written.</summary>
    public string LabelText { get; set; } = string.Empty;

    /// <summary>The tape's physical state as found: mould, shedding, brittleness, repairs.</summary>
    public string ConditionNotes { get; set; } = string.Empty;

    public string Side { get; set; } = "A";

    public DateTimeOffset CreatedUtc { get; set; }

    public List<Capture> Captures { get; set; } = [];

    public List<TapeImageRecord> Images { get; set; } = [];
}
