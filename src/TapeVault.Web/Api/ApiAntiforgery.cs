using Microsoft.AspNetCore.Antiforgery;

namespace TapeVault.Web.Api;

/// <summary>
/// The API is used with the same sign-in cookie as the pages, so every writing call must carry the antiforgery
/// token in a header (fetched from GET /api/antiforgery or read from the page), or a forged form elsewhere could write.
/// </summary>
public static class ApiAntiforgery
{
    public const string HeaderName = "X-TapeVault-Antiforgery";

    public static async ValueTask<object?> Validate(EndpointFilterInvocationContext context, EndpointFilterDelegate next)
    {
        ArgumentNullException.ThrowIfNull(context);
        ArgumentNullException.ThrowIfNull(next);
        var http = context.HttpContext;
        if (!HttpMethods.IsGet(http.Request.Method) && !HttpMethods.IsHead(http.Request.Method))
        {
            // Checked before validation, which would otherwise look for the token in a form body and read it whole.
            if (!http.Request.Headers.ContainsKey(HeaderName))
            {
                return Missing();
            }

            var antiforgery = http.RequestServices.GetRequiredService<IAntiforgery>();
            try
            {
                await antiforgery.ValidateRequestAsync(http).ConfigureAwait(false);
            }
            catch (AntiforgeryValidationException)
            {
                return Missing();
            }
        }

        return await next(context).ConfigureAwait(false);
    }

    private static IResult Missing() => Results.Problem(
        statusCode: StatusCodes.Status400BadRequest,
        title: $"The request has no valid antiforgery token; fetch one from GET /api/antiforgery and send it in the {HeaderName} header.");
}
