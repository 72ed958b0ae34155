using Microsoft.Net.Http.Headers;
using TapeVault.Core.Text;

namespace TapeVault.Web.Api;

/// <summary>
/// Every download of the archive (originals, tape images, bags and catalogues, recovered files and their zip) answers
/// as RFC 9110 asks of a static representation: GET and HEAD alike; a strong ETag, the SHA-256 of exactly the bytes
/// sent, in quotes (§8.8.3); Last-Modified (§8.8.2); byte ranges (§14), honoured under If-Range only when its validator
/// matches (§13.1.5), else the whole file with 200. The name offered to save under shows every hidden or
/// direction-changing character (<see cref="VisibleNames"/>).
/// </summary>
public static class Downloads
{
    /// <summary>Maps a download for GET and HEAD.</summary>
    public static RouteHandlerBuilder MapDownload(this IEndpointRouteBuilder routes, string pattern, Delegate handler)
    {
        ArgumentNullException.ThrowIfNull(routes);
        return routes.MapMethods(pattern, [HttpMethods.Get, HttpMethods.Head], handler);
    }

    /// <summary>The strong entity tag of bytes whose SHA-256 is <paramref name="sha256"/> (lower-case hex).</summary>
    public static EntityTagHeaderValue ETag(string sha256) => new($"\"{sha256}\"", isWeak: false);

    /// <summary>A stored object's bytes as a download; the stream is disposed once sent (or at once for HEAD).</summary>
    public static IResult File(HttpContext http, Stream content, string contentType, string fileName, string sha256, DateTimeOffset lastModified)
    {
        ArgumentNullException.ThrowIfNull(http);
        var (tag, date) = Validators(http, sha256, lastModified);
        return Results.File(content, contentType, VisibleNames.MakeVisible(fileName), lastModified: date, entityTag: tag, enableRangeProcessing: true);
    }

    /// <summary>Bytes made for this request (a recovered file, a zip of them) as a download.</summary>
    public static IResult File(HttpContext http, byte[] content, string contentType, string fileName, DateTimeOffset lastModified)
    {
        ArgumentNullException.ThrowIfNull(http);
        ArgumentNullException.ThrowIfNull(content);
        var (tag, date) = Validators(http, Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(content)), lastModified);
        return Results.File(content, contentType, VisibleNames.MakeVisible(fileName), lastModified: date, entityTag: tag, enableRangeProcessing: true);
    }

    private static (EntityTagHeaderValue Tag, DateTimeOffset LastModified) Validators(HttpContext http, string sha256, DateTimeOffset lastModified)
    {
        var tag = ETag(sha256);

        // HTTP dates have whole seconds (RFC 9110 §5.6.7); compare what the client can have been sent.
        var date = new DateTimeOffset(lastModified.UtcTicks - (lastModified.UtcTicks % TimeSpan.TicksPerSecond), TimeSpan.Zero);
        if (!IfRangeHolds(http.Request, tag, date))
        {
            // RFC 9110 §13.1.5: "if the condition is false, the server SHOULD ignore the Range header field and ...
            // respond with the entire selected representation". The framework's own check lets a non-matching date
            // older than the file's through, and any entity tag through when no ETag is set; we decide here.
            http.Request.Headers.Remove(HeaderNames.Range);
            http.Request.Headers.Remove(HeaderNames.IfRange);
        }

        return (tag, date);
    }

    /// <summary>RFC 9110 §13.1.5, evaluated for a request with both Range and If-Range; true when there is no If-Range.</summary>
    public static bool IfRangeHolds(HttpRequest request, EntityTagHeaderValue current, DateTimeOffset lastModified)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(current);
        if (!request.Headers.ContainsKey(HeaderNames.IfRange))
        {
            return true;
        }

        var ifRange = request.GetTypedHeaders().IfRange;
        if (ifRange?.EntityTag is { } tag)
        {
            // "An origin server MUST use the strong comparison function when comparing entity tags for If-Range"
            // (a weak tag never matches).
            return tag.Compare(current, useStrongComparison: true);
        }

        if (ifRange?.LastModified is { } date)
        {
            // "If the HTTP-date validator provided exactly matches the Last-Modified field value for the selected
            // representation, the condition is true"; otherwise false. Stored objects never change once written, so
            // their Last-Modified is a strong validator (§8.8.2.2).
            return date == lastModified;
        }

        return false; // a value that is neither: the condition cannot hold
    }
}
