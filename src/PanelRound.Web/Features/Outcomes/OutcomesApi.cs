using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Outcomes;

/// <summary>Outcomes: an indicator's observation at a target period, recorded once, scoring every panel that asked about it.</summary>
public static class OutcomesApi
{
    public static IEndpointRouteBuilder MapOutcomesApi(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/api/outcomes").WithTags("Outcomes").RequireAuthorization(AuthSetup.ReviewerPolicy);
        group.MapPost("/", RecordOutcome).WithName("RecordOutcome")
            .WithSummary("Records an outcome (indicator key, period, value, source, observedOn); a new value for a recorded period is a correction, history kept.");
        group.MapPost("/csv", ImportOutcomesCsv).DisableAntiforgery().WithName("ImportOutcomesCsv")
            .WithSummary("Imports outcomes from CSV (multipart field 'file'; columns indicator, period, value, optional source, observed_on), all or nothing.");
        return app;
    }

    public static async Task<Results<Ok<ObservationImportResult>, ValidationProblem, ProblemHttpResult>> RecordOutcome(
        OutcomeInput input, OutcomeRecorder outcomes, ClaimsPrincipal user) =>
        (await outcomes.RecordAsync(input, Audit.ActorOf(user))).ToOk(r => r);

    public static async Task<Results<Ok<ObservationImportResult>, ValidationProblem, ProblemHttpResult>> ImportOutcomesCsv(
        HttpRequest request, OutcomeRecorder outcomes, ClaimsPrincipal user)
    {
        var file = request.HasFormContentType ? (await request.ReadFormAsync()).Files.GetFile("file") : null;
        if (file is null)
        {
            return TypedResults.ValidationProblem(new Dictionary<string, string[]> { ["file"] = ["Send the CSV as the multipart field 'file'."] },
                title: "The input has errors.");
        }
        await using var stream = file.OpenReadStream();
        return (await outcomes.ImportCsvAsync(stream, Audit.ActorOf(user))).ToOk(r => r);
    }
}
