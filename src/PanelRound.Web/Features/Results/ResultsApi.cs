using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
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

    public static async Task<Results<Ok<List<ConsensusDto>>, ProblemHttpResult>> GetConsensus(int id, PanelRoundDbContext db)
    {
        if (!await db.Panels.AnyAsync(p => p.Id == id))
        {
            return ApiResults.NotFound($"Panel {id} does not exist.");
        }
        return TypedResults.Ok((await db.Consensus.AsNoTracking().Where(c => c.PanelId == id).OrderBy(c => c.QuestionId).ThenBy(c => c.Period).ToListAsync())
            .Select(ConsensusDto.From).ToList());
    }

    public static async Task<Results<Ok<List<ConsensusDto>>, ValidationProblem, ProblemHttpResult>> Conclude(
        int id, PanelConclusion conclusion, ClaimsPrincipal user) =>
        (await conclusion.ConcludeAsync(id, Audit.ActorOf(user))).ToOk(list => list.Select(ConsensusDto.From).ToList());
}
