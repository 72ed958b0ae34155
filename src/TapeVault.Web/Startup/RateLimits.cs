using System.Globalization;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.RateLimiting;

namespace TapeVault.Web.Startup;

/// <summary>The "TapeVault:RateLimits" section of appsettings.json.</summary>
public sealed class RateLimitOptions
{
    public const string Section = "TapeVault:RateLimits";

    /// <summary>Plot requests one account may make in a burst (a capture page asks for about five at once).</summary>
    public int PlotBurst { get; set; } = 20;

    /// <summary>Plot requests one account may make a minute once its burst is spent.</summary>
    public int PlotsPerMinute { get; set; } = 60;
}

/// <summary>
/// The app's rate limits, with ASP.NET Core's rate limiter. The plots that compute from an original (zooms, a block's
/// pulse lengths, and the whole-capture survey or overview where the decode job has not made them) are limited per
/// account with a token bucket: what the decode job made ahead costs no CPU, what is left could otherwise be asked
/// for without end. A refused request gets 429 with Retry-After and a one-sentence problem document.
/// </summary>
public static class RateLimits
{
    /// <summary>The policy of the plot endpoints.</summary>
    public const string Plots = "plots";

    public static IServiceCollection AddTapeVaultRateLimits(this IServiceCollection services, RateLimitOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (options.PlotBurst < 1 || options.PlotsPerMinute < 1)
        {
            throw new InvalidOperationException($"{RateLimitOptions.Section}: PlotBurst and PlotsPerMinute must be at least 1.");
        }

        var refill = TimeSpan.FromMinutes(1) / options.PlotsPerMinute;
        return services.AddRateLimiter(limiter =>
        {
            limiter.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            limiter.AddPolicy(Plots, http => RateLimitPartition.GetTokenBucketLimiter(
                // Every reader is signed in (the plots need it); the address is only a fallback.
                http.User.Identity?.Name is { Length: > 0 } name ? "user:" + name : "address:" + http.Connection.RemoteIpAddress,
                _ => new TokenBucketRateLimiterOptions
                {
                    TokenLimit = options.PlotBurst,
                    TokensPerPeriod = 1,
                    ReplenishmentPeriod = refill,
                    QueueLimit = 0,
                    AutoReplenishment = true,
                }));
            limiter.OnRejected = async (context, cancellation) =>
            {
                var wait = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var after) ? after : refill;
                int seconds = (int)Math.Max(1, Math.Ceiling(wait.TotalSeconds));
                context.HttpContext.Response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
                await Results.Problem(
                    statusCode: StatusCodes.Status429TooManyRequests,
                    title: string.Create(CultureInfo.InvariantCulture, $"Too many plot requests from this account (at most {options.PlotBurst} at once and {options.PlotsPerMinute} a minute); try again in {seconds} s."))
                    .ExecuteAsync(context.HttpContext).ConfigureAwait(false);
            };
        });
    }
}
