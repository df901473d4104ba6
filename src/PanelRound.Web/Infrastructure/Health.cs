using Microsoft.AspNetCore.Diagnostics.HealthChecks;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using PanelRound.Data;

namespace PanelRound.Web.Infrastructure;

/// <summary>/health/live (the process answers) and /health/ready (database reachable, migrations applied).</summary>
public static class Health
{
    public static IHostApplicationBuilder AddPanelRoundHealth(this IHostApplicationBuilder builder)
    {
        builder.Services.AddHealthChecks()
            .AddDbContextCheck<PanelRoundDbContext>("database", tags: ["ready"])
            .AddCheck<MigrationsAppliedCheck>("migrations", tags: ["ready"]);
        return builder;
    }

    public static IEndpointRouteBuilder MapPanelRoundHealth(this IEndpointRouteBuilder app)
    {
        app.MapHealthChecks("/health/live", new HealthCheckOptions { Predicate = _ => false, ResponseWriter = WriteJson });
        app.MapHealthChecks("/health/ready", new HealthCheckOptions { Predicate = c => c.Tags.Contains("ready"), ResponseWriter = WriteJson });
        return app;
    }

    private static Task WriteJson(HttpContext ctx, HealthReport report)
    {
        ctx.Response.ContentType = "application/json";
        return ctx.Response.WriteAsJsonAsync(new
        {
            status = report.Status.ToString(),
            checks = report.Entries.ToDictionary(e => e.Key, e => new { status = e.Value.Status.ToString(), e.Value.Description }),
        });
    }

    private sealed class MigrationsAppliedCheck(PanelRoundDbContext db) : IHealthCheck
    {
        public async Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
        {
            var pending = (await db.Database.GetPendingMigrationsAsync(cancellationToken)).ToList();
            return pending.Count == 0
                ? HealthCheckResult.Healthy("All migrations applied.")
                : HealthCheckResult.Unhealthy($"{pending.Count} migration(s) pending: {string.Join(", ", pending)}.");
        }
    }
}
