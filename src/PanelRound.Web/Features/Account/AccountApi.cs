using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Account;

/// <summary>Who the caller is: lets a script check its API key.</summary>
public static class AccountApi
{
    public sealed record Me(string Name, IReadOnlyList<string> Roles, string Scheme);

    public static IEndpointRouteBuilder MapAccountApi(this IEndpointRouteBuilder app)
    {
        app.MapGroup("/api").WithTags("Account").RequireAuthorization(AuthSetup.StaffPolicy)
            .MapGet("/me", GetMe).WithName("GetMe").WithSummary("The signed-in staff member or API key, with its roles.");
        return app;
    }

    public static Ok<Me> GetMe(ClaimsPrincipal user) =>
        TypedResults.Ok(new Me(
            user.Identity?.Name ?? "",
            user.FindAll(ClaimTypes.Role).Select(c => c.Value).ToList(),
            user.Identity?.AuthenticationType ?? ""));
}
