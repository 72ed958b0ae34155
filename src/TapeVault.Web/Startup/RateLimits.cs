using System.Globalization;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.RateLimiting;
using TapeVault.Web.Accounts;

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
/// The app's rate limits, with ASP.NET Core's rate limiting middleware. Each policy is one named registration here; an
/// endpoint takes one with <c>RequireRateLimiting(name)</c>. A refused request gets 429 with Retry-After and a
/// one-sentence reason.
/// </summary>
public static class RateLimits
{
    /// <summary>Sign-in attempts, by client address: one client cannot try many names or passwords quickly.</summary>
    public const string SignIn = "sign-in";

    /// <summary>
    /// The plots that compute from an original (zooms, a block's pulse lengths, and the whole-capture survey or
    /// overview where the decode job has not made them), per account with a token bucket: what the decode job made
    /// ahead costs no CPU, what is left could otherwise be asked for without end.
    /// </summary>
    public const string Plots = "plots";

    public static IServiceCollection AddTapeVaultRateLimits(this IServiceCollection services, SignInThrottleOptions signIn, RateLimitOptions plots)
    {
        ArgumentNullException.ThrowIfNull(signIn);
        ArgumentNullException.ThrowIfNull(plots);
        if (plots.PlotBurst < 1 || plots.PlotsPerMinute < 1)
        {
            throw new InvalidOperationException($"{RateLimitOptions.Section}: PlotBurst and PlotsPerMinute must be at least 1.");
        }

        var refill = TimeSpan.FromMinutes(1) / plots.PlotsPerMinute;
        return services.AddRateLimiter(limiter =>
        {
            limiter.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            limiter.OnRejected = (context, cancellation) => RejectAsync(context, plots, refill);

            // Only the attempts (POST) count; showing the form does not.
            limiter.AddPolicy(SignIn, http => HttpMethods.IsPost(http.Request.Method)
                ? RateLimitPartition.GetSlidingWindowLimiter(ClientKey(http), _ => new SlidingWindowRateLimiterOptions
                {
                    PermitLimit = signIn.ClientAttemptsPerMinute,
                    Window = TimeSpan.FromMinutes(1),
                    SegmentsPerWindow = 6,
                    QueueLimit = 0,
                })
                : RateLimitPartition.GetNoLimiter("show"));

            limiter.AddPolicy(Plots, http => RateLimitPartition.GetTokenBucketLimiter(
                // Every reader is signed in (the plots need it); the address is only a fallback.
                http.User.Identity?.Name is { Length: > 0 } name ? "user:" + name : "address:" + ClientKey(http),
                _ => new TokenBucketRateLimiterOptions
                {
                    TokenLimit = plots.PlotBurst,
                    TokensPerPeriod = 1,
                    ReplenishmentPeriod = refill,
                    QueueLimit = 0,
                    AutoReplenishment = true,
                }));
        });
    }

    /// <summary>The client a request comes from, as the connection says (the app does not trust forwarded headers).</summary>
    public static string ClientKey(HttpContext http)
    {
        ArgumentNullException.ThrowIfNull(http);
        return http.Connection.RemoteIpAddress?.ToString() ?? "unknown";
    }

    private static async ValueTask RejectAsync(OnRejectedContext context, RateLimitOptions plots, TimeSpan refill)
    {
        var http = context.HttpContext;
        bool signIn = http.GetEndpoint()?.Metadata.GetMetadata<EnableRateLimitingAttribute>()?.PolicyName == SignIn;
        var wait = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var after) ? after : signIn ? TimeSpan.FromMinutes(1) : refill;
        int seconds = (int)Math.Max(1, Math.Ceiling(wait.TotalSeconds));
        http.Response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
        if (!signIn)
        {
            await Results.Problem(
                statusCode: StatusCodes.Status429TooManyRequests,
                title: string.Create(CultureInfo.InvariantCulture, $"Too many plot requests from this account (at most {plots.PlotBurst} at once and {plots.PlotsPerMinute} a minute); try again in {seconds} s."))
                .ExecuteAsync(http).ConfigureAwait(false);
            return;
        }

        string title = $"Too many sign-in attempts from this address; wait {seconds} seconds and try again.";
        if (http.Request.Path.StartsWithSegments("/api", StringComparison.Ordinal))
        {
            await Results.Problem(statusCode: StatusCodes.Status429TooManyRequests, title: title).ExecuteAsync(http).ConfigureAwait(false);
            return;
        }

        // The sign-in page shows the same sentence on the form.
        http.Response.StatusCode = StatusCodes.Status303SeeOther;
        http.Response.Headers.Location = $"/signin?wait={seconds.ToString(CultureInfo.InvariantCulture)}";
    }
}
