using PanelRound.Web.Features.Answers;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Imports;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Outcomes;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Roster;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Features.Scorecard;

namespace PanelRound.Web.Features;

/// <summary>The use cases of every feature, with the settings they read. The API of each feature is mapped in Program.cs.</summary>
public static class FeatureSetup
{
    public static IHostApplicationBuilder AddPanelRoundFeatures(this IHostApplicationBuilder builder)
    {
        var services = builder.Services;

        // Indicators: indicators and their observations.
        services.AddScoped<IndicatorCatalog>();

        // Roster: experts, panel memberships and their links, mail to members.
        services.AddScoped<ExpertRoster>();
        services.AddScoped<Memberships>();

        // Panels: set-up while a panel is a draft.
        services.AddScoped<PanelSetup>();

        // Rounds: opening and closing, closing at the deadline.
        services.AddScoped<RoundLifecycle>();
        services.AddOptions<RoundOptions>().BindConfiguration(RoundOptions.Section).ValidateOnStart();
        services.AddSingleton<RoundDeadlineService>();
        services.AddHostedService(sp => sp.GetRequiredService<RoundDeadlineService>());

        // Answers: the expert's form and submissions.
        services.AddSingleton<PanelDefinitions>();
        services.AddScoped<ExpertAnswers>();

        // Results: results per question, the consensus and the panel's conclusion.
        services.AddScoped<PanelResults>();
        services.AddScoped<Benchmarks.PanelBenchmarks>();
        services.AddScoped<Benchmarks.BenchmarkScoring>();
        services.AddScoped<Benchmarks.ExpertBenchmarkLine>();
        services.AddScoped<Relations.PanelRelations>();
        services.AddScoped<ConsensusPublisher>();
        services.AddScoped<PanelConclusion>();

        // Scorecard: scoring data, scorecard, track-record weights, backtest.
        services.AddOptions<ScoringOptions>().BindConfiguration(ScoringOptions.Section)
            .Validate(o => o.IsValid, "Scoring:PseudoForecasts must be a finite number, 0 or more; Scoring:ImportPublicationLagDays 0 to 3650.")
            .ValidateOnStart();
        services.AddSingleton<ScoringDataCache>();
        services.AddScoped<ScoringDataLoader>();
        services.AddScoped<TrackRecordWeightsService>();
        services.AddScoped<IMemberWeights>(sp => sp.GetRequiredService<TrackRecordWeightsService>());
        services.AddScoped<ScorecardService>();

        // Calibration: calibration questions' true values, scores and weights, cross-validation, early record.
        services.AddScoped<CalibrationTruths>();
        services.AddScoped<CalibrationResults>();

        // Outcomes: observed values that score the forecasts.
        services.AddScoped<OutcomeRecorder>();

        // Imports: past panels.
        services.AddScoped<PastPanelImport>();
        return builder;
    }
}
