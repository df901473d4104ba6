using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Application;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Apis;

/// <summary>The facilitator's panel API: set-up, roster and links, rounds, results, consensus.</summary>
public static class PanelsApi
{
    public sealed record OpenRoundInput(DateTime? ClosesAt);

    public sealed record MemberInput(int ExpertId, bool SendInvitation = true);

    public sealed record ReissueInput(bool SendInvitation = true);

    public static IEndpointRouteBuilder MapPanelsApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/", ListPanels).WithName("ListPanels").WithSummary("All panels, newest first.");
        staff.MapGet("/{id:int}", GetPanel).WithName("GetPanel").WithSummary("A panel with its settings, questions and rounds.");
        staff.MapGet("/{id:int}/results", GetResults).WithName("GetPanelResults").WithSummary("Per question and period: the distribution per round, convergence, stability, outliers by panel code, stop suggestion.");
        staff.MapGet("/{id:int}/consensus", GetConsensus).WithName("GetConsensus").WithSummary("The published consensus: a value and a band per question-period.");
        staff.MapGet("/{id:int}/rounds/{number:int}/feedback", GetFeedback).WithName("GetRoundFeedback").WithSummary("The frozen feedback of a closed round.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPost("/", CreatePanel).WithName("CreatePanel").WithSummary("Creates a draft panel.");
        f.MapPut("/{id:int}", UpdatePanel).WithName("UpdatePanel").WithSummary("Edits a draft panel's title, brief, dates, target periods and settings.");
        f.MapPost("/{id:int}/questions", AddQuestion).WithName("AddQuestion").WithSummary("Adds a question about an indicator (draft only).");
        f.MapPut("/{id:int}/questions/{questionId:int}", UpdateQuestion).WithName("UpdateQuestion").WithSummary("Edits a question (draft only).");
        f.MapDelete("/{id:int}/questions/{questionId:int}", RemoveQuestion).WithName("RemoveQuestion").WithSummary("Removes a question (draft only).");
        f.MapGet("/{id:int}/members", ListMembers).WithName("ListMembers").WithSummary("The panel's memberships by panel code.");
        f.MapPost("/{id:int}/members", AddMember).WithName("AddMember").WithSummary("Adds a roster expert: a random panel code and a personal link, shown once.");
        f.MapPost("/{id:int}/members/{membershipId:int}/reissue", ReissueLink).WithName("ReissueLink").WithSummary("Issues a new personal link; the old one stops working.");
        f.MapPost("/{id:int}/members/{membershipId:int}/revoke", RevokeLink).WithName("RevokeLink").WithSummary("Revokes a personal link.");
        f.MapPost("/{id:int}/rounds", OpenRound).WithName("OpenRound").WithSummary("Opens the next round with a deadline (UTC).");
        f.MapPost("/{id:int}/rounds/{number:int}/close", CloseRound).WithName("CloseRound").WithSummary("Closes a round and freezes its feedback.");
        f.MapGet("/{id:int}/rounds/{number:int}/tracker", GetTracker).WithName("GetTracker").WithSummary("Who has answered, by panel code.");
        f.MapPost("/{id:int}/reminders", SendReminders).WithName("SendReminders").WithSummary("Reminds the members who have not answered the open round; answers how many were sent and how many failed.");
        f.MapPost("/{id:int}/conclude", Conclude).WithName("ConcludePanel").WithSummary("Publishes the consensus of the last closed round; the panel is read-only from then on.");
        return app;
    }

    public static async Task<Ok<List<PanelDto>>> ListPanels(PanelRoundDbContext db) =>
        TypedResults.Ok((await db.Panels.AsNoTracking().Include(p => p.Questions).Include(p => p.Rounds).OrderByDescending(p => p.StartsOn).ToListAsync())
            .Select(PanelDto.From).ToList());

    public static async Task<Results<Ok<PanelDto>, ProblemHttpResult>> GetPanel(int id, PanelRoundDbContext db)
    {
        var p = await db.Panels.AsNoTracking().Include(x => x.Questions).Include(x => x.Rounds).FirstOrDefaultAsync(x => x.Id == id);
        return p is null ? ApiResults.NotFound($"Panel {id} does not exist.") : TypedResults.Ok(PanelDto.From(p));
    }

    public static async Task<Results<Ok<PanelResultsView>, ProblemHttpResult>> GetResults(int id, PanelResults results)
    {
        var view = await results.BuildAsync(id);
        return view is null ? ApiResults.NotFound($"Panel {id} does not exist.") : TypedResults.Ok(view);
    }

    public static async Task<Results<Ok<List<ConsensusDto>>, ProblemHttpResult>> GetConsensus(int id, PanelRoundDbContext db)
    {
        return await ConsensusOfAsync(db, id) is { } list ? TypedResults.Ok(list) : ApiResults.NotFound($"Panel {id} does not exist.");
    }

    public static async Task<Results<Ok<List<FeedbackView>>, ProblemHttpResult>> GetFeedback(int id, int number, PanelRoundDbContext db)
    {
        var round = await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == id && r.Number == number && r.State == RoundState.Closed);
        if (round is null)
        {
            return ApiResults.NotFound($"Round {number} of panel {id} is not closed or does not exist.");
        }
        var rows = await db.RoundFeedback.AsNoTracking().Where(f => f.RoundId == round.Id).OrderBy(f => f.QuestionId).ThenBy(f => f.Period).ToListAsync();
        return TypedResults.Ok(rows.Select(r => FeedbackView.FromJson(r.StatisticsJson)).ToList());
    }

    public static async Task<Results<Created<PanelDto>, ValidationProblem, ProblemHttpResult>> CreatePanel(
        PanelInput input, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.CreatePanelAsync(input, Audit.ActorOf(user))).ToCreated(PanelDto.From, p => $"/api/panels/{p.Id}");

    public static async Task<Results<Ok<PanelDto>, ValidationProblem, ProblemHttpResult>> UpdatePanel(
        int id, PanelInput input, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.UpdatePanelAsync(id, input, Audit.ActorOf(user))).ToOk(PanelDto.From);

    public static async Task<Results<Created<QuestionDto>, ValidationProblem, ProblemHttpResult>> AddQuestion(
        int id, QuestionInput input, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.AddQuestionAsync(id, input, Audit.ActorOf(user))).ToCreated(QuestionDto.From, q => $"/api/panels/{id}/questions/{q.Id}");

    public static async Task<Results<Ok<QuestionDto>, ValidationProblem, ProblemHttpResult>> UpdateQuestion(
        int id, int questionId, QuestionInput input, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.UpdateQuestionAsync(id, questionId, input, Audit.ActorOf(user))).ToOk(QuestionDto.From);

    public static async Task<Results<Ok<bool>, ValidationProblem, ProblemHttpResult>> RemoveQuestion(
        int id, int questionId, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.RemoveQuestionAsync(id, questionId, Audit.ActorOf(user))).ToOk(b => b);

    public static async Task<Results<Ok<List<MembershipDto>>, ProblemHttpResult>> ListMembers(int id, PanelRoundDbContext db)
    {
        if (!await db.Panels.AnyAsync(p => p.Id == id))
        {
            return ApiResults.NotFound($"Panel {id} does not exist.");
        }
        return TypedResults.Ok(await db.Memberships.AsNoTracking().Where(m => m.PanelId == id).OrderBy(m => m.PanelCode)
            .Select(m => new MembershipDto(m.Id, m.ExpertId, m.PanelCode, m.State.ToString(), m.TokenIssuedAt, m.LastSeenAt)).ToListAsync());
    }

    public static async Task<Results<Created<LinkDto>, ValidationProblem, ProblemHttpResult>> AddMember(
        int id, MemberInput input, PanelWorkflow workflow, ClaimsPrincipal user, HttpRequest request)
    {
        var baseUrl = ApiResults.BaseUrl(request);
        return (await workflow.AddMemberAsync(id, input.ExpertId, Audit.ActorOf(user), baseUrl, input.SendInvitation))
            .ToCreated(l => new LinkDto(l.MembershipId, l.PanelCode, l.Token, baseUrl + l.Path), l => $"/api/panels/{id}/members/{l.MembershipId}");
    }

    public static async Task<Results<Ok<LinkDto>, ValidationProblem, ProblemHttpResult>> ReissueLink(
        int id, int membershipId, ReissueInput? input, PanelWorkflow workflow, ClaimsPrincipal user, HttpRequest request)
    {
        var baseUrl = ApiResults.BaseUrl(request);
        return (await workflow.ReissueLinkAsync(id, membershipId, Audit.ActorOf(user), baseUrl, input?.SendInvitation ?? true))
            .ToOk(l => new LinkDto(l.MembershipId, l.PanelCode, l.Token, baseUrl + l.Path));
    }

    public static async Task<Results<Ok<bool>, ValidationProblem, ProblemHttpResult>> RevokeLink(
        int id, int membershipId, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.RevokeLinkAsync(id, membershipId, Audit.ActorOf(user))).ToOk(b => b);

    public static async Task<Results<Created<RoundDto>, ValidationProblem, ProblemHttpResult>> OpenRound(
        int id, OpenRoundInput input, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.OpenRoundAsync(id, input.ClosesAt, Audit.ActorOf(user))).ToCreated(RoundDto.From, r => $"/api/panels/{id}/rounds/{r.Number}");

    public static async Task<Results<Ok<RoundDto>, ValidationProblem, ProblemHttpResult>> CloseRound(
        int id, int number, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.CloseRoundAsync(id, number, Audit.ActorOf(user))).ToOk(RoundDto.From);

    public static async Task<Results<Ok<TrackerDto>, ProblemHttpResult>> GetTracker(int id, int number, PanelRoundDbContext db)
    {
        var round = await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == id && r.Number == number);
        if (round is null)
        {
            return ApiResults.NotFound($"Round {number} of panel {id} does not exist.");
        }
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == id && m.State != MembershipState.Revoked).ToListAsync();
        var responded = (await db.Estimates.AsNoTracking().Where(e => e.RoundId == round.Id && !e.IsDraft).Select(e => e.MembershipId).Distinct().ToListAsync()).ToHashSet();
        return TypedResults.Ok(new TrackerDto(number, round.State.ToString(), round.ClosesAt, members.Count, members.Count(m => responded.Contains(m.Id)),
            members.Where(m => responded.Contains(m.Id)).Select(m => m.PanelCode).Order(StringComparer.Ordinal).ToList(),
            members.Where(m => !responded.Contains(m.Id)).Select(m => m.PanelCode).Order(StringComparer.Ordinal).ToList()));
    }

    public static async Task<Results<Ok<MailReport>, ValidationProblem, ProblemHttpResult>> SendReminders(
        int id, PanelWorkflow workflow, ClaimsPrincipal user) =>
        (await workflow.SendRemindersAsync(id, Audit.ActorOf(user))).ToOk(n => n);

    public static async Task<Results<Ok<List<ConsensusDto>>, ValidationProblem, ProblemHttpResult>> Conclude(
        int id, PanelWorkflow workflow, PanelRoundDbContext db, ClaimsPrincipal user)
    {
        var outcome = await workflow.ConcludeAsync(id, Audit.ActorOf(user));
        return outcome.IsOk ? TypedResults.Ok(await ConsensusOfAsync(db, id) ?? []) : outcome.ToOk(_ => new List<ConsensusDto>());
    }

    /// <summary>The published consensus in question-id and period order, with its question, indicator, unit, format, band and round; null for an unknown panel.</summary>
    private static async Task<List<ConsensusDto>?> ConsensusOfAsync(PanelRoundDbContext db, int id) =>
        await Reports.ConsensusExport.LoadAsync(db, id) is { } loaded
            ? loaded.Rows.OrderBy(r => r.QuestionId).ThenBy(r => r.Period, StringComparer.Ordinal).Select(ConsensusDto.From).ToList()
            : null;
}
