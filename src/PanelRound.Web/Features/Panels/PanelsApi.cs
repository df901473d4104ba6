using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Panels;

/// <summary>Panel set-up in the API: the panels with their settings, questions and rounds; drafts created and edited.</summary>
public static class PanelsApi
{
    public static IEndpointRouteBuilder MapPanelsApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/", ListPanels).WithName("ListPanels").WithSummary("All panels, newest first.");
        staff.MapGet("/{id:int}", GetPanel).WithName("GetPanel").WithSummary("A panel with its settings, questions and rounds.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPost("/", CreatePanel).WithName("CreatePanel").WithSummary("Creates a draft panel.");
        f.MapPut("/{id:int}", UpdatePanel).WithName("UpdatePanel").WithSummary("Edits a draft panel's title, brief, dates, target periods and settings.");
        f.MapPost("/{id:int}/questions", AddQuestion).WithName("AddQuestion").WithSummary("Adds a question about an indicator (draft only).");
        f.MapPut("/{id:int}/questions/{questionId:int}", UpdateQuestion).WithName("UpdateQuestion").WithSummary("Edits a question (draft only).");
        f.MapDelete("/{id:int}/questions/{questionId:int}", RemoveQuestion).WithName("RemoveQuestion").WithSummary("Removes a question (draft only).");
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

    public static async Task<Results<Created<PanelDto>, ValidationProblem, ProblemHttpResult>> CreatePanel(
        PanelInput input, PanelSetup setup, ClaimsPrincipal user) =>
        (await setup.CreatePanelAsync(input, Audit.ActorOf(user))).ToCreated(PanelDto.From, p => $"/api/panels/{p.Id}");

    public static async Task<Results<Ok<PanelDto>, ValidationProblem, ProblemHttpResult>> UpdatePanel(
        int id, PanelInput input, PanelSetup setup, ClaimsPrincipal user) =>
        (await setup.UpdatePanelAsync(id, input, Audit.ActorOf(user))).ToOk(PanelDto.From);

    public static async Task<Results<Created<QuestionDto>, ValidationProblem, ProblemHttpResult>> AddQuestion(
        int id, QuestionInput input, PanelSetup setup, ClaimsPrincipal user) =>
        (await setup.AddQuestionAsync(id, input, Audit.ActorOf(user))).ToCreated(QuestionDto.From, q => $"/api/panels/{id}/questions/{q.Id}");

    public static async Task<Results<Ok<QuestionDto>, ValidationProblem, ProblemHttpResult>> UpdateQuestion(
        int id, int questionId, QuestionInput input, PanelSetup setup, ClaimsPrincipal user) =>
        (await setup.UpdateQuestionAsync(id, questionId, input, Audit.ActorOf(user))).ToOk(QuestionDto.From);

    public static async Task<Results<Ok<bool>, ValidationProblem, ProblemHttpResult>> RemoveQuestion(
        int id, int questionId, PanelSetup setup, ClaimsPrincipal user) =>
        (await setup.RemoveQuestionAsync(id, questionId, Audit.ActorOf(user))).ToOk(b => b);
}
