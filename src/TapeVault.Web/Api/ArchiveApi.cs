using System.Globalization;
using System.Security.Claims;
using Microsoft.AspNetCore.Antiforgery;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.WebUtilities;
using Microsoft.EntityFrameworkCore;
using Microsoft.Net.Http.Headers;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Storage;
using TapeVault.Web.Accounts;
using TapeVault.Web.Startup;

namespace TapeVault.Web.Api;

/// <summary>The JSON API: everything the pages do. Reads need a signed-in viewer or curator; writes need a curator and an antiforgery header.</summary>
public static class ArchiveApi
{
    public static void MapTapeVaultApi(this IEndpointRouteBuilder app)
    {
        // One group per resource, each with its tag in the OpenAPI document. A handler's refusals are thrown as the
        // archive's exceptions and answered by the Errors filter as problem details (400, 404, 409); each group
        // declares the ones it can give, so that the document lists them.
        var api = app.MapGroup("/api").AddEndpointFilter(Errors).AddEndpointFilter(ApiAntiforgery.Validate);
        MapSession(api.MapGroup(string.Empty).WithTags("session"));
        MapCollections(api.MapGroup(string.Empty).WithTags("collections"));
        MapItems(api.MapGroup(string.Empty).WithTags("items").ProducesProblem(StatusCodes.Status404NotFound));
        MapCaptures(api.MapGroup(string.Empty).WithTags("captures").ProducesProblem(StatusCodes.Status404NotFound));
        MapJobs(api.MapGroup(string.Empty).WithTags("jobs"));
        MapExports(api.MapGroup(string.Empty).WithTags("exports"));
        MapReference(api.MapGroup(string.Empty).WithTags("reference").RequireAuthorization(Roles.ReaderPolicy));
        MapUsers(api.MapGroup(string.Empty).WithTags("users").RequireAuthorization(Roles.CuratorPolicy));
    }

    private static void MapSession(RouteGroupBuilder session)
    {
        session.MapGet("/antiforgery", (HttpContext http, IAntiforgery antiforgery) =>
            TypedResults.Ok(new AntiforgeryToken(ApiAntiforgery.HeaderName, antiforgery.GetAndStoreTokens(http).RequestToken!))).AllowAnonymous();
        session.MapPost("/signin", SignInAsync).AllowAnonymous().RequireRateLimiting(RateLimits.SignIn)
            .WithDescription("Sign in. 204 signed in; 401 wrong name or password (one answer for both); 429 too many attempts (Retry-After says how long to wait). An account with a one-time password must then change it (POST /api/account/password) before anything else.");
        session.MapPost("/signout", async (HttpContext http) =>
        {
            await SignOutEverywhereAsync(http).ConfigureAwait(false);
            return TypedResults.NoContent();
        }).RequireAuthorization(Roles.ReaderPolicy).WithDescription("Sign out: every session of this account ends, not only this one.");
        session.MapPost("/account/password", async (PasswordChange body, UserAdmin admin, UserManager<IdentityUser> users, SignInManager<IdentityUser> signIn, HttpContext http) =>
        {
            string name = Agent(http);
            await admin.ChangePasswordAsync(name, body.CurrentPassword ?? string.Empty, body.NewPassword ?? string.Empty, name).ConfigureAwait(false);
            // The change ended every session; this one goes on with the new stamp.
            await signIn.RefreshSignInAsync((await users.FindByNameAsync(name).ConfigureAwait(false))!).ConfigureAwait(false);
            return TypedResults.NoContent();
        }).RequireAuthorization(Roles.ReaderPolicy).ProducesProblem(StatusCodes.Status400BadRequest)
            .WithDescription("Change the signed-in account's password; its other sessions end.");
    }

    private static void MapCollections(RouteGroupBuilder collections)
    {
        var read = collections.MapGroup(string.Empty).RequireAuthorization(Roles.ReaderPolicy);
        var write = collections.MapGroup(string.Empty).RequireAuthorization(Roles.CuratorPolicy);
        read.MapGet("/collections", async (ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.CollectionsAsync(c).ConfigureAwait(false)));
        read.MapGet("/collections/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.CollectionAsync(id, c).ConfigureAwait(false)))
            .ProducesProblem(StatusCodes.Status404NotFound);
        write.MapPost("/collections", async (NewCollection body, CuratorActions actions, ArchiveQueries q, HttpContext http, CancellationToken c) =>
        {
            var created = await actions.CreateCollectionAsync(body.Name, body.Description, Agent(http), c).ConfigureAwait(false);
            return TypedResults.Created($"/api/collections/{created.Id}", await q.CollectionAsync(created.Id, c).ConfigureAwait(false));
        }).ProducesProblem(StatusCodes.Status400BadRequest);

        var one = write.MapGroup(string.Empty).ProducesProblem(StatusCodes.Status404NotFound);
        one.MapPost("/collections/{id:int}/items", async (int id, NewItem body, CuratorActions actions, ArchiveQueries q, HttpContext http, CancellationToken c) =>
        {
            var item = await actions.CreateItemAsync(id, body.AccessionNumber, body.Title, body.LabelText, body.ConditionNotes, body.Side, Agent(http), c).ConfigureAwait(false);
            return TypedResults.Created($"/api/items/{item.Id}", await q.ItemAsync(item.Id, c).ConfigureAwait(false));
        }).ProducesProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict)
            .WithDescription("Add an item (one tape side) to the collection. 409 when the accession number is taken.");
        one.MapPost("/collections/{id:int}/bag", (int id, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
            QueueAsync(JobKinds.Bag, id, null, actions, jobs, http, c));
        one.MapPost("/collections/{id:int}/publish", (int id, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
            QueueAsync(JobKinds.Publish, id, null, actions, jobs, http, c));
    }

    private static void MapItems(RouteGroupBuilder items)
    {
        var read = items.MapGroup(string.Empty).RequireAuthorization(Roles.ReaderPolicy);
        var write = items.MapGroup(string.Empty).RequireAuthorization(Roles.CuratorPolicy);
        read.MapGet("/items/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.ItemAsync(id, c).ConfigureAwait(false)));
        read.MapGet("/items/{id:int}/events", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.ItemEventsAsync(id, c).ConfigureAwait(false)));
        read.MapGet("/items/{id:int}/images", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.ImagesAsync(id, c).ConfigureAwait(false)));
        read.MapGet("/items/{id:int}/block-map", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.BlockMapAsync(id, c).ConfigureAwait(false)));
        read.MapGet("/items/{id:int}/positions/{position:int}", async (int id, int position, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.PositionAsync(id, position, c).ConfigureAwait(false)));
        write.MapPost("/items/{id:int}/captures", UploadAsync)
            // "*/*" too: without it routing answers 415 to any other type before the curator check and before the
            // ingest's own check against AllowedContentTypes (audio/x-wav, ...), which gives the one-sentence reason.
            .Accepts<IFormFile>("audio/wav", "application/octet-stream", "multipart/form-data", "*/*")
            .Produces<UploadResult>(StatusCodes.Status201Created)
            .Produces<UploadResult>(StatusCodes.Status200OK)
            .ProducesProblem(StatusCodes.Status400BadRequest)
            .ProducesProblem(StatusCodes.Status413PayloadTooLarge)
            .WithDescription("Upload a capture (WAV, Broadcast WAV, RF64/BW64 or FLAC) as the raw request body (audio/wav, audio/flac) or as the first file of a multipart form. Query: fileName (raw body), deck, operator, capturedOn (yyyy-mm-dd), notes, decodeProfile (queue a decode with the default bank). 201 stored; 200 when the item already held these bytes; 404 no such item; 413 when the body is larger than the archive's MaxUploadBytes.");
        write.MapPost("/items/{id:int}/merge", async (int id, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
        {
            var job = await actions.QueueMergeAsync(id, Agent(http), c).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            return TypedResults.Accepted($"/api/jobs/{job.Id}", ArchiveQueries.ToView(job));
        });
        write.MapPost("/items/{id:int}/bag", (int id, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
            QueueAsync(JobKinds.Bag, null, id, actions, jobs, http, c));
    }

    private static void MapCaptures(RouteGroupBuilder captures)
    {
        var read = captures.MapGroup(string.Empty).RequireAuthorization(Roles.ReaderPolicy);
        read.MapGet("/captures/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.CaptureAsync(id, c).ConfigureAwait(false)));
        read.MapDownload("/captures/{id:int}/original", DownloadOriginalAsync);
        captures.MapPost("/captures/{id:int}/details-from-file", async (int id, CuratorActions actions, ArchiveQueries q, HttpContext http, CancellationToken c) =>
        {
            await actions.UseEmbeddedDetailsAsync(id, Agent(http), c).ConfigureAwait(false);
            return TypedResults.Ok(await q.CaptureAsync(id, c).ConfigureAwait(false));
        })
            .RequireAuthorization(Roles.CuratorPolicy)
            .ProducesProblem(StatusCodes.Status404NotFound)
            .WithDescription("The curator confirms the deck, operator, date and notes the capture file's own metadata (Broadcast WAV bext, iXML, FLAC comments) suggests; details it does not suggest stay.");
        captures.MapPost("/captures/{id:int}/decode", async (int id, DecodeRequest body, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
        {
            var job = await actions.QueueDecodeAsync(id, body.Profile, body.Settings, body.Channel, Agent(http), c).ConfigureAwait(false);
            await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
            return TypedResults.Accepted($"/api/jobs/{job.Id}", ArchiveQueries.ToView(job));
        }).RequireAuthorization(Roles.CuratorPolicy).ProducesProblem(StatusCodes.Status400BadRequest);
    }

    private static void MapJobs(RouteGroupBuilder jobs)
    {
        var read = jobs.MapGroup(string.Empty).RequireAuthorization(Roles.ReaderPolicy);
        read.MapGet("/jobs", async (ArchiveQueries q, CancellationToken c, int? take) => TypedResults.Ok(await q.JobsAsync(take ?? 100, c).ConfigureAwait(false)));
        read.MapGet("/jobs/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.JobAsync(id, c).ConfigureAwait(false)))
            .ProducesProblem(StatusCodes.Status404NotFound);
        jobs.MapPost("/jobs/{id:int}/cancel", async (int id, JobQueue queue, CancellationToken c) =>
        {
            var job = await queue.CancelAsync(id, c).ConfigureAwait(false) ?? throw new ArchiveNotFoundException($"There is no job {id}.");
            return TypedResults.Ok(ArchiveQueries.ToView(job));
        }).RequireAuthorization(Roles.CuratorPolicy).ProducesProblem(StatusCodes.Status404NotFound).ProducesProblem(StatusCodes.Status409Conflict);
    }

    private static void MapExports(RouteGroupBuilder exports)
    {
        var read = exports.MapGroup(string.Empty).RequireAuthorization(Roles.ReaderPolicy);
        read.MapGet("/runs/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.RunAsync(id, c).ConfigureAwait(false)))
            .ProducesProblem(StatusCodes.Status404NotFound).WithTags("runs");
        read.MapGet("/images/{id:int}", async (int id, ArchiveQueries q, CancellationToken c) => TypedResults.Ok(await q.ImageAsync(id, c).ConfigureAwait(false)))
            .ProducesProblem(StatusCodes.Status404NotFound).WithTags("images");
        read.MapDownload("/images/{id:int}/download", DownloadImageAsync).ProducesProblem(StatusCodes.Status404NotFound).WithTags("images");
        read.MapGet("/exports", async (ArchiveQueries q, int? collectionId, int? itemId, CancellationToken c) => TypedResults.Ok(await q.ExportsAsync(collectionId, itemId, c).ConfigureAwait(false)));
        read.MapDownload("/exports/{id:int}/download", DownloadExportAsync).ProducesProblem(StatusCodes.Status404NotFound);
        exports.MapPost("/fixity", (int? collectionId, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c) =>
            QueueAsync(JobKinds.Fixity, collectionId, null, actions, jobs, http, c))
            .RequireAuthorization(Roles.CuratorPolicy).ProducesProblem(StatusCodes.Status404NotFound).WithTags("fixity")
            .WithDescription("Queue a fixity audit of the whole store, or of one collection (?collectionId=).");
    }

    private static void MapReference(RouteGroupBuilder reference)
    {
        reference.MapGet("/profiles", (ArchiveQueries q) => TypedResults.Ok(q.Profiles()));
        reference.MapGet("/detector-settings", () => TypedResults.Ok(ArchiveQueries.DefaultSettings()));
    }

    private static void MapUsers(RouteGroupBuilder users)
    {
        users.MapGet("/users", async (ArchiveQueries q) => TypedResults.Ok(await q.UsersAsync().ConfigureAwait(false)));
        users.MapPost("/users", async (NewUser body, UserAdmin admin, HttpContext http) =>
        {
            var (user, generated) = await admin.AddAsync(body.UserName, body.Role, body.Password, Agent(http)).ConfigureAwait(false);
            return TypedResults.Created($"/api/users/{user.UserName}", new NewUserCreated(user.UserName!, body.Role, generated));
        }).ProducesProblem(StatusCodes.Status400BadRequest).ProducesProblem(StatusCodes.Status409Conflict);
        var one = users.MapGroup(string.Empty).ProducesProblem(StatusCodes.Status404NotFound);
        one.MapPost("/users/{name}/reset", async (string name, UserAdmin admin, HttpContext http) =>
            TypedResults.Ok(new PasswordReset(name, (await admin.ResetPasswordAsync(name, null, Agent(http)).ConfigureAwait(false))!)))
            .WithDescription("Give an account a one-time password (shown only in this answer), to be changed at its next sign-in; its sessions end.");
        one.MapPost("/users/{name}/disable", async (string name, UserAdmin admin, HttpContext http) =>
        {
            await admin.DisableAsync(name, Agent(http)).ConfigureAwait(false);
            return TypedResults.NoContent();
        }).ProducesProblem(StatusCodes.Status409Conflict)
            .WithDescription("Disable an account: it cannot sign in and its sessions end. 409 for the last enabled curator, who cannot be disabled.");
        one.MapPost("/users/{name}/enable", async (string name, UserAdmin admin, HttpContext http) =>
        {
            await admin.EnableAsync(name, Agent(http)).ConfigureAwait(false);
            return TypedResults.NoContent();
        }).WithDescription("Enable a disabled account again.");
    }

    /// <summary>Signs out and renews the account's security stamp, so that a copy of the session cookie is worth nothing.</summary>
    public static async Task SignOutEverywhereAsync(HttpContext http)
    {
        ArgumentNullException.ThrowIfNull(http);
        var users = http.RequestServices.GetRequiredService<UserManager<IdentityUser>>();
        if (await users.GetUserAsync(http.User).ConfigureAwait(false) is { } user)
        {
            await users.UpdateSecurityStampAsync(user).ConfigureAwait(false);
        }

        await http.RequestServices.GetRequiredService<SignInManager<IdentityUser>>().SignOutAsync().ConfigureAwait(false);
    }

    public static string Agent(HttpContext http)
    {
        ArgumentNullException.ThrowIfNull(http);
        return http.User.Identity?.Name ?? "anonymous";
    }

    /// <summary>The archive's refusals as problem documents: 400 bad input, 404 unknown id, 409 contradicts what is stored.</summary>
    public static async ValueTask<object?> Errors(EndpointFilterInvocationContext context, EndpointFilterDelegate next)
    {
        try
        {
            return await next(context).ConfigureAwait(false);
        }
        catch (ArchiveTooLargeException e)
        {
            return Results.Problem(statusCode: StatusCodes.Status413PayloadTooLarge, title: e.Message);
        }
        catch (ArchiveInputException e)
        {
            return Results.Problem(statusCode: StatusCodes.Status400BadRequest, title: e.Message);
        }
        catch (ArchiveNotFoundException e)
        {
            return Results.Problem(statusCode: StatusCodes.Status404NotFound, title: e.Message);
        }
        catch (ArchiveConflictException e)
        {
            return Results.Problem(statusCode: StatusCodes.Status409Conflict, title: e.Message);
        }
        catch (BadHttpRequestException e)
        {
            return Results.Problem(statusCode: e.StatusCode, title: e.Message);
        }
    }

    private static async Task<IResult> SignInAsync(SignInRequest body, SignInGuard guard, HttpContext http)
    {
        var (outcome, retryAfter) = await guard.SignInAsync(http, body.UserName, body.Password).ConfigureAwait(false);
        switch (outcome)
        {
            case SignInOutcome.SignedIn or SignInOutcome.SignedInMustChangePassword:
                return Results.NoContent();
            case SignInOutcome.Throttled:
                http.Response.Headers.RetryAfter = Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds)).ToString(CultureInfo.InvariantCulture);
                return Results.Problem(statusCode: StatusCodes.Status429TooManyRequests, title: SignInGuard.ThrottledMessage(retryAfter));
            default:
                return Results.Problem(statusCode: StatusCodes.Status401Unauthorized, title: SignInGuard.RefusedMessage);
        }
    }

    /// <summary>Whether this user may have an original's bytes (the download itself, or a bag that carries it).</summary>
    public static bool MayDownloadOriginals(WebOptions web, ClaimsPrincipal user)
    {
        ArgumentNullException.ThrowIfNull(web);
        ArgumentNullException.ThrowIfNull(user);
        return web.ViewersMayDownloadOriginals || user.IsInRole(Roles.Curator);
    }

    /// <summary>Bags carry originals; catalogues do not.</summary>
    public static bool MayDownloadExport(string kind, WebOptions web, ClaimsPrincipal user) =>
        kind != "bag" || MayDownloadOriginals(web, user);

    private static async Task<IResult> DownloadOriginalAsync(int id, ArchiveDbContext db, ContentStore store, WebOptions web, HttpContext http, ClaimsPrincipal user, CancellationToken c)
    {
        if (!MayDownloadOriginals(web, user))
        {
            return Results.Problem(statusCode: StatusCodes.Status403Forbidden, title: "Only curators may download original captures here.");
        }

        var capture = await db.Captures.AsNoTracking().FirstOrDefaultAsync(x => x.Id == id, c).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no capture {id}.");
        if (!store.Exists(capture.Sha256))
        {
            return Results.Problem(statusCode: StatusCodes.Status410Gone, title: "The stored original is missing from the content store; run a fixity audit.");
        }

        return Downloads.File(http, store.OpenRead(capture.Sha256), capture.Container == "flac" ? "audio/flac" : "audio/wav", capture.OriginalFileName, capture.Sha256, capture.IngestedUtc);
    }

    private static async Task<Accepted<JobView>> QueueAsync(string kind, int? collectionId, int? itemId, CuratorActions actions, JobDispatcher jobs, HttpContext http, CancellationToken c)
    {
        var job = await actions.QueueScopedAsync(kind, collectionId, itemId, Agent(http), c).ConfigureAwait(false);
        await jobs.DispatchAsync(job, CancellationToken.None).ConfigureAwait(false);
        return TypedResults.Accepted($"/api/jobs/{job.Id}", ArchiveQueries.ToView(job));
    }

    /// <summary>
    /// A bag holds the originals byte for byte (it is the archive's preservation package, complete or not at all), so
    /// where viewers may not download originals they may not download bags either; catalogues hold no originals.
    /// </summary>
    private static async Task<IResult> DownloadExportAsync(int id, ArchiveDbContext db, ContentStore store, WebOptions web, HttpContext http, ClaimsPrincipal user, CancellationToken c)
    {
        var export = await db.Exports.AsNoTracking().FirstOrDefaultAsync(x => x.Id == id, c).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no export {id}.");
        if (!MayDownloadExport(export.Kind, web, user))
        {
            return Results.Problem(statusCode: StatusCodes.Status403Forbidden, title: "Bags hold the original captures; only curators may download them here.");
        }

        if (!store.Exists(export.Sha256))
        {
            return Results.Problem(statusCode: StatusCodes.Status410Gone, title: "The export's file is missing from the content store; run a fixity audit.");
        }

        return Downloads.File(http, store.OpenRead(export.Sha256), "application/zip", export.FileName, export.Sha256, export.CreatedUtc);
    }

    private static async Task<IResult> DownloadImageAsync(int id, ArchiveDbContext db, ContentStore store, HttpContext http, CancellationToken c)
    {
        var image = await db.Images.AsNoTracking().Include(i => i.Item).FirstOrDefaultAsync(x => x.Id == id, c).ConfigureAwait(false)
            ?? throw new ArchiveNotFoundException($"There is no tape image {id}.");
        if (!store.Exists(image.Sha256))
        {
            return Results.Problem(statusCode: StatusCodes.Status410Gone, title: "The tape image's file is missing from the content store; run a fixity audit.");
        }

        var name = $"{SafeDownloadName(image.Item!.AccessionNumber)}-v{image.Version}{Core.Image.TapeImageContainer.Extension}";
        return Downloads.File(http, store.OpenRead(image.Sha256), "application/octet-stream", name, image.Sha256, image.CreatedUtc);
    }

    private static string SafeDownloadName(string accession) =>
        new([.. accession.Select(ch => char.IsAsciiLetterOrDigit(ch) || ch is '-' or '_' or '.' ? ch : '_')]);

    /// <summary>Streams the body into the store (never buffered whole), then records the capture; bad input leaves nothing behind.</summary>
    private static async Task<Results<Created<UploadResult>, Ok<UploadResult>>> UploadAsync(
        int id,
        HttpRequest request,
        CaptureIngest ingest,
        CuratorActions actions,
        ArchiveOptions options,
        JobDispatcher jobs,
        ArchiveQueries queries,
        CancellationToken cancellation)
    {
        if (request.ContentLength is { } declared && declared > options.MaxUploadBytes)
        {
            throw new ArchiveTooLargeException($"The upload is larger than the limit of {ByteSizes.Format(options.MaxUploadBytes)}.");
        }

        // The store counts the bytes against the limit itself; the server's small default limit is for other requests.
        if (request.HttpContext.Features.Get<IHttpMaxRequestBodySizeFeature>() is { IsReadOnly: false } limit)
        {
            limit.MaxRequestBodySize = null;
        }

        var query = request.Query;
        DateOnly? capturedOn = null;
        if (!string.IsNullOrEmpty(query["capturedOn"]))
        {
            if (!DateOnly.TryParseExact(query["capturedOn"], "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var date))
            {
                throw new ArchiveInputException("capturedOn must be a date written yyyy-mm-dd.");
            }

            capturedOn = date;
        }

        string agent = Agent(request.HttpContext);
        IngestResult result;
        if (MediaTypeHeaderValue.TryParse(request.ContentType, out var media) && media.MediaType.Equals("multipart/form-data", StringComparison.OrdinalIgnoreCase))
        {
            result = await IngestMultipartAsync(request, media, ingest, id, query, capturedOn, agent, cancellation).ConfigureAwait(false);
        }
        else
        {
            result = await ingest.IngestAsync(request.Body, Request(id, query["fileName"], request.ContentType ?? "application/octet-stream", query, capturedOn, agent), cancellation).ConfigureAwait(false);
        }

        JobView? job = null;
        if (!result.Duplicate && !string.IsNullOrWhiteSpace(query["decodeProfile"]))
        {
            var queued = await actions.QueueDecodeAsync(result.Capture.Id, query["decodeProfile"]!, null, null, agent, cancellation).ConfigureAwait(false);
            await jobs.DispatchAsync(queued, CancellationToken.None).ConfigureAwait(false);
            job = ArchiveQueries.ToView(queued);
        }

        var summary = await queries.CaptureAsync(result.Capture.Id, cancellation).ConfigureAwait(false);
        var body = new UploadResult(summary, result.Duplicate, result.LinkedExistingObject, result.Message, job);
        return result.Duplicate ? TypedResults.Ok(body) : TypedResults.Created($"/api/captures/{summary.Id}", body);
    }

    private static async Task<IngestResult> IngestMultipartAsync(
        HttpRequest request, MediaTypeHeaderValue media, CaptureIngest ingest, int id, IQueryCollection query, DateOnly? capturedOn, string agent, CancellationToken cancellation)
    {
        var boundary = HeaderUtilities.RemoveQuotes(media.Boundary).Value;
        if (string.IsNullOrEmpty(boundary) || boundary.Length > 200)
        {
            throw new ArchiveInputException("The multipart upload has no valid boundary.");
        }

        var reader = new MultipartReader(boundary, request.Body) { HeadersLengthLimit = 16 * 1024 };
        while (await reader.ReadNextSectionAsync(cancellation).ConfigureAwait(false) is { } section)
        {
            if (ContentDispositionHeaderValue.TryParse(section.ContentDisposition, out var disposition) && disposition.IsFileDisposition())
            {
                var name = HeaderUtilities.RemoveQuotes(disposition.FileNameStar.HasValue ? disposition.FileNameStar : disposition.FileName).Value;
                return await ingest.IngestAsync(section.Body, Request(id, name, section.ContentType, query, capturedOn, agent), cancellation).ConfigureAwait(false);
            }
        }

        throw new ArchiveInputException("The multipart upload holds no file.");
    }

    private static IngestRequest Request(int id, string? fileName, string? contentType, IQueryCollection query, DateOnly? capturedOn, string agent) => new()
    {
        ItemId = id,
        FileName = fileName ?? string.Empty,
        ContentType = contentType,
        Deck = Limit(query["deck"], "deck"),
        Operator = Limit(query["operator"], "operator"),
        Notes = Limit(query["notes"], "notes"),
        CapturedOn = capturedOn,
        Agent = agent,
    };

    private static string Limit(string? value, string what) =>
        (value?.Length ?? 0) > 2000 ? throw new ArchiveInputException($"The {what} is longer than 2000 characters.") : value?.Trim() ?? string.Empty;
}
