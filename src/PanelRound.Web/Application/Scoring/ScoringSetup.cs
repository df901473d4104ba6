using PanelRound.Web.Apis;

namespace PanelRound.Web.Application.Scoring;

/// <summary>Services and endpoints of outcomes, the scorecard, track-record weights, the backtest and past-panel imports.</summary>
public static class ScoringSetup
{
    public static IServiceCollection AddPanelRoundScoring(this IServiceCollection services)
    {
        services.AddOptions<ScoringOptions>().BindConfiguration(ScoringOptions.Section)
            .Validate(o => o.IsValid, "Scoring:PseudoForecasts must be a finite number, 0 or more; Scoring:ImportPublicationLagDays 0 to 3650.")
            .ValidateOnStart();
        services.AddScoped<ScoringService>();
        services.AddScoped<TrackRecordWeightsService>();
        services.AddScoped<IMemberWeights>(sp => sp.GetRequiredService<TrackRecordWeightsService>());
        services.AddScoped<ScorecardService>();
        services.AddScoped<OutcomeRecorder>();
        services.AddScoped<PastPanelImport>();
        return services;
    }

    public static IEndpointRouteBuilder MapScoringApis(this IEndpointRouteBuilder app)
    {
        app.MapScorecardApi();
        app.MapOutcomesApi();
        app.MapImportsApi();
        return app;
    }
}
