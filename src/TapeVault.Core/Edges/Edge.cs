namespace TapeVault.Core.Edges;

/// <summary>
/// One switch of a detector's two-level output. <see cref="Sample"/> is the interpolated zero crossing that
/// preceded the switch, in samples from the start of the capture, so its timing does not carry the hysteresis delay.
/// </summary>
public readonly record struct Edge(double Sample, bool Rising, float Level);

/// <summary>A reusable, growable list of edges for one detector setting and one chunk.</summary>
public sealed class EdgeBuffer
{
    private Edge[] _items = new Edge[256];

    public int Count { get; private set; }

    public ReadOnlySpan<Edge> Items => _items.AsSpan(0, Count);

    public void Clear() => Count = 0;

    public void Add(Edge edge)
    {
        if (Count == _items.Length)
        {
            Array.Resize(ref _items, _items.Length * 2);
        }

        _items[Count++] = edge;
    }
}
