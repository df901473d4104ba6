using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Mvc;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Cross-site request forgery guard for the JSON API: a state-changing call that relies on a
/// browser cookie (no API key, no expert token) must carry the <c>X-Requested-With</c> header,
/// which a cross-site form cannot send and a cross-origin script cannot send without the
/// server's consent. Calls with an API key or an expert token are not cookie-borne and pass, and
/// so do calls whose cookies sign nobody in: they are anonymous and get the 401 of authorization.
/// </summary>
public sealed class CookieApiGuard(RequestDelegate next)
{
    public const string Header = "X-Requested-With";

    public async Task InvokeAsync(HttpContext ctx)
    {
        var r = ctx.Request;
        if (r.Path.StartsWithSegments("/api")
            && !HttpMethods.IsGet(r.Method) && !HttpMethods.IsHead(r.Method) && !HttpMethods.IsOptions(r.Method)
            && string.IsNullOrEmpty(r.Headers.Authorization) && string.IsNullOrEmpty(r.Headers[ExpertAccess.TokenHeader])
            && string.IsNullOrEmpty(r.Headers[Header])
            && await SignedInByCookieAsync(ctx))
        {
            ctx.Response.StatusCode = StatusCodes.Status400BadRequest;
            await ctx.Response.WriteAsJsonAsync(new ProblemDetails
            {
                Status = 400,
                Title = "Missing request header",
                Detail = $"API calls that change data with a sign-in cookie must send the {Header} header; scripts should use an API key.",
            }, options: null, contentType: "application/problem+json");
            return;
        }
        await next(ctx);
    }

    /// <summary>Whether a staff or an expert cookie signs the caller in (the request has neither an API key nor an expert token here).</summary>
    private static async Task<bool> SignedInByCookieAsync(HttpContext ctx) =>
        (await ctx.AuthenticateAsync(AuthSetup.StaffScheme)).Succeeded || (await ctx.AuthenticateAsync(AuthSetup.ExpertScheme)).Succeeded;
}
