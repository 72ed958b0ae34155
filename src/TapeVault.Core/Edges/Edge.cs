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

    /// <summary>
    /// Room for <paramref name="more"/> edges after those held, for a writer that appends many at once without a call
    /// each: the array to write them into from <see cref="Count"/> on, then <see cref="Added"/> with the new count.
    /// </summary>
    internal Edge[] Reserve(int more)
    {
        int needed = Count + more;
        if (needed > _items.Length)
        {
            Array.Resize(ref _items, Math.Max(_items.Length * 2, needed));
        }

        return _items;
    }

    /// <summary>The edges written after <see cref="Reserve"/>: the buffer now holds <paramref name="count"/>.</summary>
    internal void Added(int count)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(count, Count);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(count, _items.Length);
        Count = count;
    }
}
