using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Relations;

/// <summary>Relations in the API: declaring, listing and checking identities between three questions of a panel.</summary>
public static class RelationsApi
{
    public static IEndpointRouteBuilder MapRelationsApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/{id:int}/relations", List).WithName("ListRelations").WithSummary("The panel's relations between three questions.");
        staff.MapGet("/{id:int}/relations/check", Check).WithName("CheckRelations")
            .WithSummary("Each relation on the consensus per period (flag beyond the tolerance; derived paths), and on each expert's own answers by panel code.");

        var f = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPost("/{id:int}/relations", Add).WithName("DeclareRelation")
            .WithSummary("Declares result = first × second (Product) or result = first + second (Sum); each term a question (or one derived term), with unit and unit factor.");
        f.MapDelete("/{id:int}/relations/{relationId:int}", Remove).WithName("RemoveRelation").WithSummary("Removes a relation.");
        return app;
    }

    public static async Task<Results<Ok<List<RelationDto>>, ProblemHttpResult>> List(int id, PanelRelations relations) =>
        await relations.ListAsync(id) is { } list ? TypedResults.Ok(list.Select(RelationDto.From).ToList()) : ApiResults.NotFound($"Panel {id} does not exist.");

    public static async Task<Results<Created<RelationDto>, ValidationProblem, ProblemHttpResult>> Add(
        int id, RelationInput input, PanelRelations relations, ClaimsPrincipal user) =>
        (await relations.AddAsync(id, input, Audit.ActorOf(user))).ToCreated(RelationDto.From, r => $"/api/panels/{id}/relations/{r.Id}");

    public static async Task<Results<Ok<RelationDto>, ValidationProblem, ProblemHttpResult>> Remove(int id, int relationId, PanelRelations relations, ClaimsPrincipal user) =>
        (await relations.RemoveAsync(id, relationId, Audit.ActorOf(user))).ToOk(RelationDto.From);

    /// <summary>The consensus check and the per-panel-code check.</summary>
    public sealed record RelationsCheckDto(IReadOnlyList<RelationConsensusCheck> Consensus, IReadOnlyList<RelationCodesDto> ByPanelCode);

    public sealed record RelationCodesDto(RelationDto Relation, IReadOnlyList<RelationCodeCheck> Codes);

    public static async Task<Results<Ok<RelationsCheckDto>, ProblemHttpResult>> Check(int id, PanelRelations relations, PanelResults results)
    {
        var list = await relations.ListAsync(id);
        var view = await results.BuildAsync(id);
        if (list is null || view is null)
        {
            return ApiResults.NotFound($"Panel {id} does not exist.");
        }
        var codes = await relations.ByPanelCodeAsync(id);
        return TypedResults.Ok(new RelationsCheckDto(PanelRelations.OnConsensus(list, view), codes.Select(c => new RelationCodesDto(c.Relation, c.Codes)).ToList()));
    }
}
