using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Benchmarks;

/// <summary>Benchmarks in the API: a panel's statistical benchmark forecasts.</summary>
public static class BenchmarksApi
{
    public static IEndpointRouteBuilder MapBenchmarksApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/{id:int}/benchmarks", GetBenchmarks).WithName("GetPanelBenchmarks")
            .WithSummary("Per question: statistical benchmark paths (naive, drift, mean of the last k, exponential smoothing, Holt, damped, seasonal naive) with 80% intervals, fitted parameters and in-sample errors.");
        return app;
    }

    public static async Task<Results<Ok<PanelBenchmarksDto>, ProblemHttpResult>> GetBenchmarks(int id, PanelBenchmarks benchmarks) =>
        await benchmarks.BuildAsync(id) is { } view ? TypedResults.Ok(view) : ApiResults.NotFound($"Panel {id} does not exist.");
}
