using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Answers;

/// <summary>
/// The expert's API, authenticated by the personal link's token in <c>X-Expert-Token</c> (or
/// the link's cookie). A token reaches only its own membership: any other panel or membership
/// id, and an unknown or revoked token, answer 404; a call with neither token nor cookie answers 401.
/// </summary>
public static class ExpertApi
{
    public sealed record MembershipView(int MembershipId, int PanelId, string PanelCode, string State);

    public static IEndpointRouteBuilder MapExpertApi(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/expert").WithTags("Expert").DisableAntiforgery().AddEndpointFilter(async (ctx, next) =>
        {
            var db = ctx.HttpContext.RequestServices.GetRequiredService<PanelRoundDbContext>();
            // One connection for the whole request (closed when the request's context is disposed), not one per query.
            await db.Database.OpenConnectionAsync(ctx.HttpContext.RequestAborted);
            var m = await ExpertAccess.CurrentAsync(ctx.HttpContext, db);
            if (m is null)
            {
                return await ExpertAccess.PresentedAsync(ctx.HttpContext)
                    ? ApiResults.NotFound("This personal link is unknown or has been revoked.")
                    : TypedResults.Problem($"Send the personal link's token in the {ExpertAccess.TokenHeader} header, or open the link first.",
                        statusCode: StatusCodes.Status401Unauthorized, title: "Unauthorized");
            }
            ctx.HttpContext.Items[typeof(PanelMembership)] = m;
            return await next(ctx);
        });
        g.MapGet("/memberships/{membershipId:int}", GetMembership).WithName("GetOwnMembership").WithSummary("The token's own membership.");
        g.MapGet("/panels/{panelId:int}", GetForm).WithName("GetExpertForm")
            .WithSummary("The brief, questions with reference series, own answers and the previous round's anonymous feedback.");
        g.MapPost("/panels/{panelId:int}/estimates", Submit).WithName("SubmitEstimates")
            .WithSummary("Saves a draft or submits answers for the open round (each revision a new row; the latest counts).")
            .WithDescription("An optional Idempotency-Key header (1-255 printable ASCII characters, e.g. a UUID) makes a retry safe: "
                + "the same key with the same answers returns the first receipt (Replayed: true) and adds nothing; the same key with other answers answers 400.");
        return app;
    }

    private static PanelMembership Own(HttpContext ctx) => (PanelMembership)ctx.Items[typeof(PanelMembership)]!;

    public static Results<Ok<MembershipView>, ProblemHttpResult> GetMembership(int membershipId, HttpContext ctx)
    {
        var m = Own(ctx);
        return m.Id != membershipId
            ? ApiResults.NotFound($"Membership {membershipId} is not reachable with this link.")
            : TypedResults.Ok(new MembershipView(m.Id, m.PanelId, m.PanelCode, m.State.ToString()));
    }

    public static async Task<Results<Ok<ExpertForm>, ProblemHttpResult>> GetForm(int panelId, HttpContext ctx, ExpertAnswers answers)
    {
        var m = Own(ctx);
        return m.PanelId != panelId
            ? ApiResults.NotFound($"Panel {panelId} is not reachable with this link.")
            : TypedResults.Ok(await answers.GetFormAsync(m));
    }

    public static async Task<Results<Ok<SubmissionReceipt>, ValidationProblem, ProblemHttpResult>> Submit(
        int panelId, SubmissionInput input, HttpContext ctx, ExpertAnswers answers)
    {
        var m = Own(ctx);
        if (m.PanelId != panelId)
        {
            return ApiResults.NotFound($"Panel {panelId} is not reachable with this link.");
        }
        string? key = null;
        if (ctx.Request.Headers.TryGetValue(SubmissionKeys.Header, out var keys))
        {
            key = keys.Count == 1 ? keys[0] ?? "" : "";
            // An empty header is a malformed key, not an absent one.
            if ((keys.Count > 1 ? "Send one idempotency key." : SubmissionKeys.Problem(key)) is { } problem)
            {
                return TypedResults.ValidationProblem(new Dictionary<string, string[]> { [SubmissionKeys.Header] = [problem] }, title: "The input has errors.");
            }
        }
        return (await answers.SubmitAsync(m, input, key)).ToOk(r => r);
    }
}
