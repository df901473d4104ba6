using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Results;

/// <summary>Results in the API: the facilitator's results per question, the published consensus, and concluding a panel.</summary>
public static class ResultsApi
{
    public static IEndpointRouteBuilder MapResultsApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/{id:int}/results", GetResults).WithName("GetPanelResults").WithSummary("Per question and period: the distribution per round, convergence, stability, outliers by panel code, stop suggestion.");
        staff.MapGet("/{id:int}/consensus", GetConsensus).WithName("GetConsensus").WithSummary("The published consensus: a value and a band per question-period.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPost("/{id:int}/conclude", Conclude).WithName("ConcludePanel").WithSummary("Publishes the consensus of the last closed round; the panel is read-only from then on.");
        return app;
    }

    public static async Task<Results<Ok<PanelResultsView>, ProblemHttpResult>> GetResults(int id, PanelResults results)
    {
        var view = await results.BuildAsync(id);
        return view is null ? ApiResults.NotFound($"Panel {id} does not exist.") : TypedResults.Ok(view);
    }

    public static async Task<Results<Ok<List<ConsensusDto>>, ProblemHttpResult>> GetConsensus(int id, PanelRoundDbContext db) =>
        await ConsensusOfAsync(db, id) is { } list ? TypedResults.Ok(list) : ApiResults.NotFound($"Panel {id} does not exist.");

    public static async Task<Results<Ok<List<ConsensusDto>>, ValidationProblem, ProblemHttpResult>> Conclude(
        int id, PanelConclusion conclusion, PanelRoundDbContext db, ClaimsPrincipal user)
    {
        var outcome = await conclusion.ConcludeAsync(id, Audit.ActorOf(user));
        return outcome.IsOk ? TypedResults.Ok(await ConsensusOfAsync(db, id) ?? []) : outcome.ToOk(_ => new List<ConsensusDto>());
    }

    /// <summary>The published consensus in question-id and period order, with its question, indicator, unit, format, band and round; null for an unknown panel.</summary>
    private static async Task<List<ConsensusDto>?> ConsensusOfAsync(PanelRoundDbContext db, int id) =>
        await Reports.ConsensusExport.LoadAsync(db, id) is { } loaded
            ? loaded.Rows.OrderBy(r => r.QuestionId).ThenBy(r => r.Period, StringComparer.Ordinal).Select(ConsensusDto.From).ToList()
            : null;
}
