using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Core.Scoring;
using PanelRound.Web.Application.Scoring;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Apis;

/// <summary>The expert scorecard, the backtest of track-record weights, and equal against weighted consensus.</summary>
public static class ScorecardApi
{
    /// <summary>The caution every scorecard answer carries.</summary>
    public const string Caution =
        "These are scores of forecasts, not valuations or investment advice; rely on licensed valuers and follow local regulation for any decision.";

    /// <summary>One expert's scores: final-round forecasts; each figure has the n it rests on.</summary>
    public sealed record ScorecardExpertDto(
        string Expert, int N, double? Mae, double? MeanError, double? Rmse, int NMape, double? Mape,
        int NScaled, double? ScaledMae, double? ScaledMeanError, string? Bias,
        int NRange, double? Coverage, double? IntervalScore, double? ScaledIntervalScore,
        int NScaledNaive, double? ScaledSkill, int NPaired, double? FirstToFinalChange,
        bool Ranked, int? Rank, int WeightN, double Weight, double? RangeWeight);

    /// <summary>A virtual expert's scores (the consensus, or the no-change forecast).</summary>
    public sealed record ScorecardSummaryDto(
        int N, double? Mae, double? MeanError, double? Rmse, int NMape, double? Mape, int NScaled, double? ScaledMae,
        int NRange, double? Coverage, double? IntervalScore, int NScaledNaive, double? ScaledSkill)
    {
        public static ScorecardSummaryDto From(ErrorSummary s) => new(
            s.N, s.Mae, s.MeanError, s.Rmse, s.NMape, s.Mape, s.NScaled, s.ScaledMae, s.NRange, s.Coverage, s.IntervalScore, s.NScaledNaive, s.ScaledSkill);
    }

    public sealed record ScorecardDto(
        string? Indicator, string? Period, int Panels, IReadOnlyList<ScorecardExpertDto> Experts, ScorecardSummaryDto Consensus, ScorecardSummaryDto Naive,
        DateOnly WeightsKnownBefore, double PseudoForecasts, string Caution);

    public sealed record BacktestPanelDto(
        int PanelId, string Panel, DateOnly ClosedOn, int HistoryItems, int N, double? EqualScaledMae, double? WeightedScaledMae, double? Difference);

    public sealed record BacktestDto(IReadOnlyList<BacktestPanelDto> Panels, BacktestComparison Pooled, double PseudoForecasts, string Caution);

    public static IEndpointRouteBuilder MapScorecardApi(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/api/scorecard").WithTags("Scorecard").RequireAuthorization(AuthSetup.StaffPolicy);
        group.MapGet("/", GetScorecard).WithName("GetScorecard")
            .WithSummary("Per expert (by external key) and for the consensus and the no-change forecast: n, MAE, mean error, RMSE, scaled MAE, coverage and interval score; optional filters indicator and period.");
        group.MapGet("/backtest", GetBacktest).WithName("GetBacktest")
            .WithSummary("Per past panel and pooled: scaled MAE of the equal-weight and the track-record consensus, weights known before each panel closed.");
        app.MapGet("/api/panels/{id:int}/consensus/compare", CompareConsensus).WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy)
            .WithName("CompareConsensus")
            .WithSummary("Equal-weight and track-record consensus of the last closed round side by side, with the members' weights by panel code.");
        return app;
    }

    public static async Task<Ok<ScorecardDto>> GetScorecard(string? indicator, string? period, ScorecardService scorecard)
    {
        var view = await scorecard.ScorecardAsync(new ScorecardFilter(Blank(indicator), Blank(period)));
        var experts = view.Experts.Select(l => new ScorecardExpertDto(
            l.Score.ExpertKey, l.Score.Final.N, l.Score.Final.Mae, l.Score.Final.MeanError, l.Score.Final.Rmse, l.Score.Final.NMape, l.Score.Final.Mape,
            l.Score.Final.NScaled, l.Score.Final.ScaledMae, l.Score.Final.ScaledMeanError, l.Score.Bias?.ToString(),
            l.Score.Final.NRange, l.Score.Final.Coverage, l.Score.Final.IntervalScore, l.Score.Final.ScaledIntervalScore,
            l.Score.Final.NScaledNaive, l.Score.Final.ScaledSkill, l.Score.FinalPaired.NScaled, l.Score.FirstToFinalChange,
            l.Score.Ranked, l.Score.Rank, l.PointWeight.N, l.PointWeight.Weight, l.RangeWeight?.Weight)).ToList();
        return TypedResults.Ok(new ScorecardDto(view.Filter.Indicator, view.Filter.Period, view.Panels, experts,
            ScorecardSummaryDto.From(view.Consensus), ScorecardSummaryDto.From(view.Naive), view.WeightsKnownBefore, view.PseudoForecasts, Caution));
    }

    public static async Task<Ok<BacktestDto>> GetBacktest(ScorecardService scorecard)
    {
        var view = await scorecard.BacktestAsync();
        return TypedResults.Ok(new BacktestDto(
            view.Panels.Select(l => new BacktestPanelDto(l.Panel.Id, l.Panel.Key, l.Result.ClosedOn, l.Result.HistoryItems, l.Result.Comparison.N,
                l.Result.Comparison.EqualScaledMae, l.Result.Comparison.WeightedScaledMae, l.Result.Comparison.Difference)).ToList(),
            view.Pooled, view.PseudoForecasts, Caution));
    }

    public static async Task<Results<Ok<ConsensusComparison>, ProblemHttpResult>> CompareConsensus(int id, ScorecardService scorecard)
    {
        var comparison = await scorecard.CompareAsync(id);
        return comparison is null ? ApiResults.NotFound($"Panel {id} does not exist or has no closed round.") : TypedResults.Ok(comparison);
    }

    private static string? Blank(string? text) => string.IsNullOrWhiteSpace(text) ? null : text.Trim();
}
