using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Storage;
using TapeVault.Core.Formats;
using TapeVault.Web.Startup;

namespace TapeVault.Web.Api;

/// <summary>
/// The capture page's data as JSON, for anyone who can read the archive: the overview, the run's blocks, a zoomed
/// stretch with one setting's threshold and edges, the pulse-length histogram and the measured speed. Reads only.
/// Where viewers may not download originals, their waveforms are no finer than <see cref="CapturePlots.ViewerFramesPerColumn"/>
/// samples a column. The ones that can compute from the original are rate-limited per account (<see cref="RateLimits.Plots"/>).
/// </summary>
public static class CaptureApi
{
    public static void MapCaptureApi(this IEndpointRouteBuilder app)
    {
        var read = app.MapGroup("/api/captures/{id:int}").AddEndpointFilter(ArchiveApi.Errors).RequireAuthorization(Roles.ReaderPolicy).WithTags("capture plots");

        read.MapGet("/overview", (int id, int? columns, Plots plots, CancellationToken c) =>
            plots.Get.OverviewAsync(id, columns ?? CapturePlots.DefaultColumns, c))
            .WithDescription("The whole capture as min/max columns (default 1000, at most 4000; the decode job makes the default one), cached once computed.")
            .RequireRateLimiting(RateLimits.Plots);
        read.MapGet("/blocks", (int id, int? run, string? setting, Plots plots, CancellationToken c) =>
            plots.Get.BlocksAsync(id, run, setting, c))
            .WithDescription("The block positions of a decode run (default: the newest), where the chosen setting read them.");
        read.MapGet("/zoom", (int id, int? run, string? setting, double? from, double? seconds, int? columns, Plots plots, CancellationToken c) =>
            plots.Get.ZoomAsync(id, run, setting, from, seconds, columns ?? CapturePlots.DefaultColumns, c))
            .WithDescription("A stretch of the capture (from and seconds; by default the first 40 ms of the first block; at most 20 s) with one setting's conditioned signal, switching band and edges.")
            .RequireRateLimiting(RateLimits.Plots);
        read.MapGet("/pulses", (int id, int? run, string? setting, string? scope, int? position, Plots plots, CancellationToken c) =>
            plots.Get.HistogramAsync(id, run, setting, scope, position, c))
            .WithDescription("Pulse-length histogram of one setting over a block position (scope=block; position, by default the first) or the whole capture (scope=whole; the default when the run found no block; the decode job makes these for every setting), with the profile's marks.")
            .RequireRateLimiting(RateLimits.Plots);
        read.MapGet("/speed", (int id, int? run, string? setting, Plots plots, CancellationToken c) =>
            plots.Get.SpeedAsync(id, run, setting, c))
            .WithDescription("The playback speed each block was read at by one setting, against time in the capture.");
    }

    /// <summary>Builds the query service per request from services the archive already registers.</summary>
    public sealed class Plots(ArchiveDbContext db, ContentStore store, ProfileCatalog profiles)
    {
        public CapturePlots Get { get; } = new(db, store, profiles);

        public static ValueTask<Plots?> BindAsync(HttpContext http)
        {
            ArgumentNullException.ThrowIfNull(http);
            var services = http.RequestServices;
            var plots = new Plots(services.GetRequiredService<ArchiveDbContext>(), services.GetRequiredService<ContentStore>(), services.GetRequiredService<ProfileCatalog>());
            plots.Get.LeastFramesPerColumn = CapturePlots.LeastFramesPerColumnFor(http.User, services.GetRequiredService<WebOptions>());
            return ValueTask.FromResult<Plots?>(plots);
        }
    }
}
