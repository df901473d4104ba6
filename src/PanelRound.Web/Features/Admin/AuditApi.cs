using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Admin;

public sealed record AuditDto(long Id, DateTime At, string Actor, string Action, string EntityType, string EntityId, int? PanelId, string? Details);

/// <summary>The audit log, for Administrators.</summary>
public static class AuditApi
{
    public static IEndpointRouteBuilder MapAuditApi(this IEndpointRouteBuilder app)
    {
        app.MapGroup("/api/audit").WithTags("Audit").RequireAuthorization(AuthSetup.AdministratorPolicy)
            .MapGet("/", List).WithName("ListAuditEvents").WithSummary("Audit events, newest first; filter by panel and action.");
        return app;
    }

    public static async Task<Ok<List<AuditDto>>> List(PanelRoundDbContext db, int? panelId, string? action, int take = 200)
    {
        var q = db.AuditEvents.AsNoTracking();
        if (panelId is { } p)
        {
            q = q.Where(e => e.PanelId == p);
        }
        if (!string.IsNullOrWhiteSpace(action))
        {
            q = q.Where(e => e.Action == action);
        }
        var rows = await q.OrderByDescending(e => e.Id).Take(Math.Clamp(take, 1, 5000)).ToListAsync();
        return TypedResults.Ok(rows.Select(e => new AuditDto(e.Id, e.At, e.Actor, e.Action, e.EntityType, e.EntityId, e.PanelId, e.Details)).ToList());
    }
}
