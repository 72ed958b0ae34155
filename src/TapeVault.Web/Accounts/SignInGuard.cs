using System.Collections.Concurrent;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.DataProtection;
using Microsoft.AspNetCore.Identity;
using TapeVault.Archive.Accounts;
using TapeVault.Web.Startup;

namespace TapeVault.Web.Accounts;

/// <summary>The "TapeVault:Web:SignIn" section: how failed sign-ins are slowed down.</summary>
public sealed class SignInThrottleOptions
{
    /// <summary>Sign-in attempts one client address may make in a minute, whatever the names (the rate limiter's policy).</summary>
    public int ClientAttemptsPerMinute { get; set; } = 30;

    /// <summary>Failures one client may have on one name before each further attempt must wait.</summary>
    public int FreeFailures { get; set; } = 5;

    /// <summary>The longest wait between attempts of one client on one name, in seconds (the wait doubles up to it).</summary>
    public int LongestDelaySeconds { get; set; } = 900;

    /// <summary>
    /// Failures on one name from all clients in an hour before the name takes attempts only from browsers that have
    /// signed in to it before (NIST SP 800-63B-4 §3.2.2 asks at most 100 consecutive failures an account; from memory).
    /// </summary>
    public int AccountFailuresPerHour { get; set; } = 100;
}

/// <summary>What a sign-in attempt came to.</summary>
public enum SignInOutcome
{
    /// <summary>Signed in.</summary>
    SignedIn,

    /// <summary>Signed in with a one-time password, which must be changed before anything else.</summary>
    SignedInMustChangePassword,

    /// <summary>Wrong name, wrong password or a disabled account: one answer for all three.</summary>
    Refused,

    /// <summary>Too many failures: the attempt was not even checked.</summary>
    Throttled,
}

/// <summary>
/// Signs people in so that nobody can lock anyone else out and nothing tells which names exist.
/// <list type="bullet">
/// <item>No account is ever locked by failures. A client that fails on a name waits before its next attempt on that
/// name, the wait doubling from 1 s after <see cref="SignInThrottleOptions.FreeFailures"/> failures up to a limit
/// (OWASP Authentication Cheat Sheet, "Protect Against Automated Attacks": a growing delay rather than a lock, from
/// memory). The owner, on a client that has not failed, is not slowed by an attacker's failures.</item>
/// <item>Against many clients (a botnet) guessing one name: after <see cref="SignInThrottleOptions.AccountFailuresPerHour"/>
/// failures in an hour (a sliding window of the rate limiter), the name takes attempts only from browsers holding a
/// device cookie of an earlier sign-in to it (OWASP "Slow Down Online Guessing Attacks with Device Cookies").</item>
/// <item>A name with no account is counted, slowed and answered exactly like a wrong password, and takes as long: its
/// attempt is checked against a stand-in hash.</item>
/// </list>
/// Client addresses are also limited across all names by the rate limiter's <see cref="RateLimits.SignIn"/> policy.
/// </summary>
public sealed class SignInGuard : IDisposable
{
    public const string DeviceCookie = "tapevault.device";
    private const int MaxTracked = 100_000;
    private const int MaxNameLength = 256;

    private readonly SignInThrottleOptions options;
    private readonly TimeProvider time;
    private readonly IDataProtector deviceProtector;
    private readonly ConcurrentDictionary<(string Name, string Client), Failures> failures = new();
    private readonly PartitionedRateLimiter<string> accountFailures;
    private string? standInHash;

    public SignInGuard(WebOptions web, TimeProvider time, IDataProtectionProvider protection)
    {
        ArgumentNullException.ThrowIfNull(web);
        ArgumentNullException.ThrowIfNull(protection);
        options = web.SignIn;
        this.time = time;
        deviceProtector = protection.CreateProtector("TapeVault.SignIn.Device");
        accountFailures = PartitionedRateLimiter.Create<string, string>(name => RateLimitPartition.GetSlidingWindowLimiter(name, _ => new SlidingWindowRateLimiterOptions
        {
            PermitLimit = options.AccountFailuresPerHour,
            Window = TimeSpan.FromHours(1),
            SegmentsPerWindow = 12,
            QueueLimit = 0,
        }));
    }

    /// <summary>Checks the name and password and signs in; how long to wait is set on <paramref name="retryAfter"/> when throttled.</summary>
    public async Task<(SignInOutcome Outcome, TimeSpan RetryAfter)> SignInAsync(HttpContext http, string? userName, string? password)
    {
        ArgumentNullException.ThrowIfNull(http);
        var services = http.RequestServices;
        var users = services.GetRequiredService<UserManager<IdentityUser>>();
        var signIn = services.GetRequiredService<SignInManager<IdentityUser>>();
        string typed = users.NormalizeName((userName ?? string.Empty).Trim()) ?? string.Empty;

        // Counted under at most 256 characters (no account name is longer), so that long names cost no memory.
        string name = typed.Length > MaxNameLength ? typed[..MaxNameLength] : typed;
        var key = (name, RateLimits.ClientKey(http));
        var now = time.GetUtcNow();

        if (failures.TryGetValue(key, out var mine) && mine.NextAllowed > now)
        {
            return (SignInOutcome.Throttled, mine.NextAllowed - now);
        }

        if (accountFailures.GetStatistics(name) is { CurrentAvailablePermits: <= 0 } && !HasDevice(http, name))
        {
            return (SignInOutcome.Throttled, TimeSpan.FromMinutes(5));
        }

        var user = typed.Length is 0 or > MaxNameLength ? null : await users.FindByNameAsync(typed).ConfigureAwait(false);
        bool passwordRight;
        if (user is null)
        {
            // The same work as for a real account, so that the time taken does not tell the name is unknown.
            var hasher = services.GetRequiredService<IPasswordHasher<IdentityUser>>();
            var standIn = new IdentityUser("stand-in");
            standInHash ??= hasher.HashPassword(standIn, UserAdmin.GeneratePassword());
            _ = hasher.VerifyHashedPassword(standIn, standInHash, password ?? string.Empty);
            passwordRight = false;
        }
        else
        {
            passwordRight = await users.CheckPasswordAsync(user, password ?? string.Empty).ConfigureAwait(false);
        }

        var admin = services.GetRequiredService<UserAdmin>();
        if (!passwordRight || user is null || await admin.IsDisabledAsync(user).ConfigureAwait(false))
        {
            RecordFailure(key, name, now);
            return (SignInOutcome.Refused, TimeSpan.Zero);
        }

        failures.TryRemove(key, out _);
        await signIn.SignInAsync(user, isPersistent: false).ConfigureAwait(false);
        http.Response.Cookies.Append(DeviceCookie, deviceProtector.Protect(name), new CookieOptions
        {
            HttpOnly = true,
            SameSite = SameSiteMode.Strict,
            Secure = http.Request.IsHttps,
            IsEssential = true,
            Expires = now.AddDays(180),
            Path = "/",
        });
        return (await admin.MustChangePasswordAsync(user).ConfigureAwait(false) ? SignInOutcome.SignedInMustChangePassword : SignInOutcome.SignedIn, TimeSpan.Zero);
    }

    /// <summary>The one sentence for a throttled attempt.</summary>
    public static string ThrottledMessage(TimeSpan retryAfter) =>
        $"Too many failed sign-ins for this name; wait {Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds))} seconds and try again (a browser that has signed in to it before may try at once).";

    /// <summary>The one sentence for a wrong name, a wrong password and a disabled account alike.</summary>
    public const string RefusedMessage = "The user name or password is wrong.";

    public void Dispose() => accountFailures.Dispose();

    private void RecordFailure((string Name, string Client) key, string name, DateTimeOffset now)
    {
        if (failures.Count >= MaxTracked)
        {
            Prune(now);
        }

        failures.AddOrUpdate(
            key,
            _ => new Failures(1, now, now + Delay(1)),
            (_, old) => new Failures(old.Count + 1, now, now + Delay(old.Count + 1)));
        using var lease = accountFailures.AttemptAcquire(name);
    }

    /// <summary>No wait before the free failures are used up; then 1 s, doubling with each failure, up to the longest delay.</summary>
    private TimeSpan Delay(int count)
    {
        int over = count - options.FreeFailures + 1;
        if (over <= 0)
        {
            return TimeSpan.Zero;
        }

        double seconds = Math.Min(options.LongestDelaySeconds, Math.Pow(2, Math.Min(over - 1, 30)));
        return TimeSpan.FromSeconds(seconds);
    }

    private void Prune(DateTimeOffset now)
    {
        foreach (var (key, value) in failures)
        {
            if (now - value.Last > TimeSpan.FromHours(1))
            {
                failures.TryRemove(key, out _);
            }
        }
    }

    private bool HasDevice(HttpContext http, string name)
    {
        if (!http.Request.Cookies.TryGetValue(DeviceCookie, out var value) || string.IsNullOrEmpty(value))
        {
            return false;
        }

        try
        {
            return string.Equals(deviceProtector.Unprotect(value), name, StringComparison.Ordinal);
        }
        catch (System.Security.Cryptography.CryptographicException)
        {
            return false;
        }
    }

    private sealed record Failures(int Count, DateTimeOffset Last, DateTimeOffset NextAllowed);
}
