namespace TapeVault.Core.Decoding;

/// <summary>
/// Chunks handed from one thread to another, in order, at most as many as the decode has buffers (so adding never
/// waits). A thread that finds the queue empty sleeps on the queue's lock until a chunk comes, the queue is completed or
/// the token is cancelled, without first spinning: on a machine whose cores other work shares, a thread waiting for the
/// next chunk would otherwise spend processor time on each of the thousands of hand-overs of a long capture.
/// </summary>
internal sealed class ChunkQueue : IDisposable
{
    private readonly Queue<ChunkWork> _items;
    private readonly CancellationToken _cancellation;
    private readonly CancellationTokenRegistration _wake;
    private bool _completed;

    /// <param name="cancellation">Lets a waiting thread go (<see cref="TryTake"/> then throws <see cref="OperationCanceledException"/>).</param>
    public ChunkQueue(int capacity, CancellationToken cancellation)
    {
        _items = new Queue<ChunkWork>(capacity);
        _cancellation = cancellation;
        _wake = cancellation.Register(WakeAll);
    }

    public void Add(ChunkWork work)
    {
        lock (_items)
        {
            _items.Enqueue(work);
            Monitor.Pulse(_items);
        }
    }

    /// <summary>No chunk will be added: a thread waiting on the empty queue is let go.</summary>
    public void CompleteAdding()
    {
        lock (_items)
        {
            _completed = true;
            Monitor.PulseAll(_items);
        }
    }

    /// <summary>The next chunk, waiting for it; false once the queue is completed and empty.</summary>
    public bool TryTake(out ChunkWork work)
    {
        lock (_items)
        {
            while (_items.Count == 0 && !_completed)
            {
                _cancellation.ThrowIfCancellationRequested();
                Monitor.Wait(_items);
            }

            _cancellation.ThrowIfCancellationRequested();
            return _items.TryDequeue(out work!);
        }
    }

    public void Dispose() => _wake.Dispose();

    private void WakeAll()
    {
        lock (_items)
        {
            Monitor.PulseAll(_items);
        }
    }
}
