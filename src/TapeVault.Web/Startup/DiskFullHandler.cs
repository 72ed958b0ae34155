using Microsoft.AspNetCore.Diagnostics;
using TapeVault.Archive.Storage;

namespace TapeVault.Web.Startup;

/// <summary>
/// A full disk is answered with a problem document whose title says so, status 507 Insufficient Storage (RFC 4918
/// §11.5: "the server is unable to store the representation needed to complete the request"), instead of the error
/// page's 500. The archive's state is unchanged: uploads are staged aside and rows are written in one transaction.
/// </summary>
public sealed partial class DiskFullHandler(ILogger<DiskFullHandler> logger) : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(httpContext);
        if (!StorageFaults.IsDiskFull(exception) || httpContext.Response.HasStarted)
        {
            return false;
        }

        // The path the request was sent to (the middleware may already point the request at the error page).
        string path = httpContext.Features.Get<IExceptionHandlerFeature>()?.Path ?? httpContext.Request.Path.Value ?? string.Empty;
        LogDiskFull(logger, exception, path);
        bool upload = HttpMethods.IsPost(httpContext.Request.Method) && path.EndsWith("/captures", StringComparison.Ordinal);
        // Written as JSON whatever the request accepts, so that a page's script can show the sentence.
        await Results.Problem(
            statusCode: StatusCodes.Status507InsufficientStorage,
            title: StorageFaults.DiskFullSentence(upload ? "the upload" : "what this request was to store")).ExecuteAsync(httpContext).ConfigureAwait(false);
        return true;
    }

    [LoggerMessage(Level = LogLevel.Error, Message = "The archive's disk is full while answering {Path}.")]
    private static partial void LogDiskFull(ILogger logger, Exception exception, string path);
}
