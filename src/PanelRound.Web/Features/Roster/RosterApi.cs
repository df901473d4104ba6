using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

/// <summary>The roster and a panel's memberships in the API: experts, personal links (issued, re-issued, revoked) and reminders.</summary>
public static class RosterApi
{
    public sealed record MemberInput(int ExpertId, bool SendInvitation = true);

    public sealed record ReissueInput(bool SendInvitation = true);

    public static IEndpointRouteBuilder MapRosterApi(this IEndpointRouteBuilder app)
    {
        var experts = app.MapGroup("/api/experts").WithTags("Experts").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        experts.MapGet("/", ListExperts).WithName("ListExperts").WithSummary("The expert roster.");
        experts.MapPost("/", CreateExpert).WithName("CreateExpert").WithSummary("Adds an expert to the roster.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapGet("/{id:int}/members", ListMembers).WithName("ListMembers").WithSummary("The panel's memberships by panel code.");
        f.MapPost("/{id:int}/members", AddMember).WithName("AddMember").WithSummary("Adds a roster expert: a random panel code and a personal link, shown once.");
        f.MapPost("/{id:int}/members/{membershipId:int}/reissue", ReissueLink).WithName("ReissueLink").WithSummary("Issues a new personal link; the old one stops working.");
        f.MapPost("/{id:int}/members/{membershipId:int}/revoke", RevokeLink).WithName("RevokeLink").WithSummary("Revokes a personal link.");
        f.MapPost("/{id:int}/reminders", SendReminders).WithName("SendReminders").WithSummary("Reminds the members who have not answered the open round; answers how many were sent and how many failed.");
        return app;
    }

    public static async Task<Ok<List<ExpertDto>>> ListExperts(PanelRoundDbContext db) =>
        TypedResults.Ok((await db.Experts.AsNoTracking().OrderBy(e => e.Name).ToListAsync()).Select(ExpertDto.From).ToList());

    public static async Task<Results<Created<ExpertDto>, ValidationProblem, ProblemHttpResult>> CreateExpert(
        ExpertInput input, ExpertRoster roster, ClaimsPrincipal user) =>
        (await roster.CreateExpertAsync(input, Audit.ActorOf(user))).ToCreated(ExpertDto.From, e => $"/api/experts/{e.Id}");

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
        int id, MemberInput input, Memberships memberships, ClaimsPrincipal user, HttpRequest request)
    {
        var baseUrl = ApiResults.BaseUrl(request);
        return (await memberships.AddMemberAsync(id, input.ExpertId, Audit.ActorOf(user), baseUrl, input.SendInvitation))
            .ToCreated(l => new LinkDto(l.MembershipId, l.PanelCode, l.Token, baseUrl + l.Path), l => $"/api/panels/{id}/members/{l.MembershipId}");
    }

    public static async Task<Results<Ok<LinkDto>, ValidationProblem, ProblemHttpResult>> ReissueLink(
        int id, int membershipId, ReissueInput? input, Memberships memberships, ClaimsPrincipal user, HttpRequest request)
    {
        var baseUrl = ApiResults.BaseUrl(request);
        return (await memberships.ReissueLinkAsync(id, membershipId, Audit.ActorOf(user), baseUrl, input?.SendInvitation ?? true))
            .ToOk(l => new LinkDto(l.MembershipId, l.PanelCode, l.Token, baseUrl + l.Path));
    }

    public static async Task<Results<Ok<bool>, ValidationProblem, ProblemHttpResult>> RevokeLink(
        int id, int membershipId, Memberships memberships, ClaimsPrincipal user) =>
        (await memberships.RevokeLinkAsync(id, membershipId, Audit.ActorOf(user))).ToOk(b => b);

    public static async Task<Results<Ok<MailReport>, ValidationProblem, ProblemHttpResult>> SendReminders(
        int id, Memberships memberships, ClaimsPrincipal user) =>
        (await memberships.SendRemindersAsync(id, Audit.ActorOf(user))).ToOk(n => n);
}
