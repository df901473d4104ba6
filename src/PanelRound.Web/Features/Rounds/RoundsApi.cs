using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Rounds;

/// <summary>Who has answered a round, by panel code.</summary>
public sealed record TrackerDto(int Round, string State, DateTime ClosesAt, int Members, int Responded, IReadOnlyList<string> RespondedCodes, IReadOnlyList<string> PendingCodes);

/// <summary>Rounds in the API: opening and closing them, who has answered, and a closed round's frozen feedback.</summary>
public static class RoundsApi
{
    public sealed record OpenRoundInput(DateTime? ClosesAt);

    public static IEndpointRouteBuilder MapRoundsApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/{id:int}/rounds/{number:int}/feedback", GetFeedback).WithName("GetRoundFeedback").WithSummary("The frozen feedback of a closed round.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPost("/{id:int}/rounds", OpenRound).WithName("OpenRound").WithSummary("Opens the next round with a deadline (UTC).");
        f.MapPost("/{id:int}/rounds/{number:int}/close", CloseRound).WithName("CloseRound").WithSummary("Closes a round and freezes its feedback.");
        f.MapGet("/{id:int}/rounds/{number:int}/tracker", GetTracker).WithName("GetTracker").WithSummary("Who has answered, by panel code.");
        return app;
    }

    public static async Task<Results<Ok<List<FeedbackView>>, ProblemHttpResult>> GetFeedback(int id, int number, PanelRoundDbContext db)
    {
        var round = await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == id && r.Number == number && r.State == RoundState.Closed);
        if (round is null)
        {
            return ApiResults.NotFound($"Round {number} of panel {id} is not closed or does not exist.");
        }
        var rows = await db.FrozenFeedback.AsNoTracking().Where(f => f.RoundId == round.Id).OrderBy(f => f.QuestionId).ThenBy(f => f.Period).ToListAsync();
        return TypedResults.Ok(rows.Select(r => FeedbackView.FromJson(r.StatisticsJson)).ToList());
    }

    public static async Task<Results<Created<RoundDto>, ValidationProblem, ProblemHttpResult>> OpenRound(
        int id, OpenRoundInput input, RoundLifecycle rounds, ClaimsPrincipal user) =>
        (await rounds.OpenRoundAsync(id, input.ClosesAt, Audit.ActorOf(user))).ToCreated(RoundDto.From, r => $"/api/panels/{id}/rounds/{r.Number}");

    public static async Task<Results<Ok<RoundDto>, ValidationProblem, ProblemHttpResult>> CloseRound(
        int id, int number, RoundLifecycle rounds, ClaimsPrincipal user) =>
        (await rounds.CloseRoundAsync(id, number, Audit.ActorOf(user))).ToOk(RoundDto.From);

    public static async Task<Results<Ok<TrackerDto>, ProblemHttpResult>> GetTracker(int id, int number, PanelRoundDbContext db)
    {
        var round = await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == id && r.Number == number);
        if (round is null)
        {
            return ApiResults.NotFound($"Round {number} of panel {id} does not exist.");
        }
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == id && m.State != MembershipState.Revoked).ToListAsync();
        var responded = await RoundResponses.AnsweredAsync(db, round.Id);
        return TypedResults.Ok(new TrackerDto(number, round.State.ToString(), round.ClosesAt, members.Count, members.Count(m => responded.Contains(m.Id)),
            members.Where(m => responded.Contains(m.Id)).Select(m => m.PanelCode).Order(StringComparer.Ordinal).ToList(),
            members.Where(m => !responded.Contains(m.Id)).Select(m => m.PanelCode).Order(StringComparer.Ordinal).ToList()));
    }
}
