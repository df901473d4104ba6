namespace PanelRound.Web.Application.Scoring;

/// <summary>Services and endpoints of outcomes, the scorecard, track-record weights, the backtest and past-panel imports.</summary>
public static class ScoringSetup
{
    public static IServiceCollection AddPanelRoundScoring(this IServiceCollection services)
    {
        services.AddScoped<IMemberWeights, TrackRecordWeightsService>();
        return services;
    }

    public static IEndpointRouteBuilder MapScoringApis(this IEndpointRouteBuilder app) => app;
}
