using System.Globalization;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.RateLimiting;
using TapeVault.Web.Accounts;

namespace TapeVault.Web.Startup;

/// <summary>
/// The rate limiter's policies (ASP.NET Core's rate limiting middleware). Each policy is one named registration
/// here; an endpoint takes one with <c>RequireRateLimiting(name)</c>.
/// </summary>
public static class RateLimits
{
    /// <summary>Sign-in attempts, by client address: one client cannot try many names or passwords quickly.</summary>
    public const string SignIn = "sign-in";

    public static IServiceCollection AddTapeVaultRateLimits(this IServiceCollection services, SignInThrottleOptions signIn)
    {
        ArgumentNullException.ThrowIfNull(signIn);
        return services.AddRateLimiter(limiter =>
        {
            limiter.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            limiter.OnRejected = RejectAsync;

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
        });
    }

    /// <summary>The client a request comes from, as the connection says (the app does not trust forwarded headers).</summary>
    public static string ClientKey(HttpContext http)
    {
        ArgumentNullException.ThrowIfNull(http);
        return http.Connection.RemoteIpAddress?.ToString() ?? "unknown";
    }

    private static async ValueTask RejectAsync(OnRejectedContext context, CancellationToken cancellation)
    {
        var http = context.HttpContext;
        int seconds = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var retry) ? Math.Max(1, (int)Math.Ceiling(retry.TotalSeconds)) : 60;
        http.Response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
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
