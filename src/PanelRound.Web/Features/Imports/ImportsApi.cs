using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Imports;

/// <summary>Imports of a firm's past panels and their outcomes.</summary>
public static class ImportsApi
{
    public static IEndpointRouteBuilder MapImportsApi(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/api/imports").WithTags("Imports").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        group.MapPost("/past-panels", ImportPastPanels).DisableAntiforgery().WithName("ImportPastPanels")
            .WithSummary("Imports past panels (multipart files 'forecasts' and 'observations'), all or nothing, with a row-level error report.");
        return app;
    }

    public static async Task<Results<Ok<PastPanelImportResult>, ValidationProblem, ProblemHttpResult>> ImportPastPanels(
        HttpRequest request, PastPanelImport import, ClaimsPrincipal user)
    {
        var form = request.HasFormContentType ? await request.ReadFormAsync() : null;
        var forecasts = form?.Files.GetFile("forecasts");
        if (forecasts is null)
        {
            return TypedResults.ValidationProblem(
                new Dictionary<string, string[]> { ["forecasts"] = ["Send the forecasts CSV as the multipart file 'forecasts' (and the observations as 'observations')."] },
                title: "The input has errors.");
        }
        var observations = form!.Files.GetFile("observations");
        await using var f = forecasts.OpenReadStream();
        await using var o = observations?.OpenReadStream();
        return (await import.ImportAsync(f, o, Audit.ActorOf(user))).ToOk(r => r);
    }
}
