using System.Collections.Concurrent;
using TapeVault.Archive.Storage;
using TapeVault.Core.Audio;

namespace TapeVault.Archive.Runs;

/// <summary>
/// Overviews of stored captures, kept as small files under the store's <c>derived/overviews</c> folder (never under
/// <c>objects/</c>, so audits and exports do not see them). An original is content-addressed and never changes, so an
/// overview computed once is right for as long as the original exists; a damaged or foreign cache file is recomputed.
/// </summary>
public static class CaptureOverviews
{
    /// <summary>The columns of the capture page's overview; the decode job makes this one ahead of any request.</summary>
    public const int DefaultColumns = 1000;

    // Requests for the same overview while it is being computed wait for the one computation.
    private static readonly ConcurrentDictionary<string, Lazy<Task<WaveformOverview>>> InFlight = new(StringComparer.Ordinal);

    public static string CachePath(ContentStore store, string sha256, int columns, ChannelChoice channel)
    {
        ArgumentNullException.ThrowIfNull(store);
        if (!ContentStore.IsHash(sha256))
        {
            throw new ArgumentException("Not a lower-case hex SHA-256.", nameof(sha256));
        }

        return Path.Combine(store.Root, "derived", "overviews", sha256[..2], $"{sha256}.{columns}.{channel.ToString().ToLowerInvariant()}.bin");
    }

    /// <summary>The overview and whether it came from the cache.</summary>
    public static async Task<(WaveformOverview Overview, bool Cached)> GetAsync(ContentStore store, string sha256, int columns, ChannelChoice channel, CancellationToken cancellation)
    {
        string cache = CachePath(store, sha256, columns, channel);
        if (File.Exists(cache))
        {
            var bytes = await File.ReadAllBytesAsync(cache, cancellation).ConfigureAwait(false);
            if (WaveformOverview.ReadFrom(bytes) is { } cached)
            {
                return (cached, true);
            }
        }

        var work = InFlight.GetOrAdd(cache, _ => new Lazy<Task<WaveformOverview>>(() => Task.Run(() => Compute(store, sha256, columns, channel, cache))));
        try
        {
            return (await work.Value.WaitAsync(cancellation).ConfigureAwait(false), false);
        }
        finally
        {
            if (work.Value.IsCompleted)
            {
                InFlight.TryRemove(cache, out _);
            }
        }
    }

    private static WaveformOverview Compute(ContentStore store, string sha256, int columns, ChannelChoice channel, string cache)
    {
        var original = store.PathOf(sha256);
        if (!File.Exists(original))
        {
            throw new ArchiveConflictException("The stored original is missing from the content store; run a fixity audit.");
        }

        WaveformOverview overview;
        try
        {
            overview = WaveformOverview.Compute(original, columns, channel);
        }
        catch (CaptureFormatException e)
        {
            throw new ArchiveConflictException($"The stored original could not be read: {e.Message}");
        }

        Write(store, cache, overview);
        return overview;
    }

    /// <summary>
    /// Keeps an overview made elsewhere (a decode makes one from the samples it reads, so the job needs no pass of its
    /// own): <paramref name="overview"/> must be of the whole capture <paramref name="sha256"/>, read through <paramref name="channel"/>.
    /// </summary>
    public static void Keep(ContentStore store, string sha256, ChannelChoice channel, WaveformOverview overview)
    {
        ArgumentNullException.ThrowIfNull(overview);
        string cache = CachePath(store, sha256, overview.Columns, channel);
        if (!File.Exists(cache))
        {
            Write(store, cache, overview);
        }
    }

    private static void Write(ContentStore store, string cache, WaveformOverview overview)
    {
        // Written aside and renamed into place, so a reader never sees half a file.
        Directory.CreateDirectory(Path.GetDirectoryName(cache)!);
        string temporary = Path.Combine(store.TempFolder, $"{Guid.NewGuid():N}.overview.part");
        using (var file = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write))
        {
            overview.WriteTo(file);
        }

        File.Move(temporary, cache, overwrite: true);
    }
}
