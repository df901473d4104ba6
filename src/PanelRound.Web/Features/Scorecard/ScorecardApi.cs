using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Core.Scoring;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>The expert scorecard, the backtest of track-record weights, and equal against weighted consensus.</summary>
public static class ScorecardApi
{
    /// <summary>The caution every scorecard answer carries.</summary>
    public const string Caution =
        "These are scores of forecasts, not valuations or investment advice; rely on licensed valuers and follow local regulation for any decision.";

    /// <summary>One expert's scores: final-round forecasts; each figure has the n it rests on.</summary>
    /// <remarks>
    /// n of each figure: <c>n</c> for MAE, mean error and RMSE; <c>nMape</c>; <c>nScaled</c> for the scaled MAE, the scaled mean error
    /// and the bias; <c>nRange</c> for coverage and interval score; <c>nRangeScaled</c> for the scaled interval score; <c>nScaledNaive</c>
    /// for skill; <c>nPaired</c> for the round-1-to-final change; <c>weightN</c> for the weight and <c>rangeWeightN</c> for the range weight.
    /// A figure that is not a finite number is null.
    /// </remarks>
    public sealed record ScorecardExpertDto(
        string Expert, int N, double? Mae, double? MeanError, double? Rmse, int NMape, double? Mape,
        int NScaled, double? ScaledMae, double? ScaledMeanError, string? Bias,
        int NRange, double? Coverage, double? IntervalScore, int NRangeScaled, double? ScaledIntervalScore,
        int NScaledNaive, double? ScaledSkill, int NPaired, double? FirstToFinalChange,
        bool Ranked, int? Rank, int WeightN, double? Weight, int? RangeWeightN, double? RangeWeight);

    /// <summary>A virtual expert's scores (the consensus, or the no-change forecast); n as in <see cref="ScorecardExpertDto"/>; non-finite figures are null.</summary>
    public sealed record ScorecardSummaryDto(
        int N, double? Mae, double? MeanError, double? Rmse, int NMape, double? Mape, int NScaled, double? ScaledMae, double? ScaledMeanError,
        int NRange, double? Coverage, double? IntervalScore, int NRangeScaled, double? ScaledIntervalScore, int NScaledNaive, double? ScaledSkill)
    {
        public static ScorecardSummaryDto From(ErrorSummary s) => new(
            s.N, F(s.Mae), F(s.MeanError), F(s.Rmse), s.NMape, F(s.Mape), s.NScaled, F(s.ScaledMae), F(s.ScaledMeanError),
            s.NRange, F(s.Coverage), F(s.IntervalScore), s.NRangeScaled, F(s.ScaledIntervalScore), s.NScaledNaive, F(s.ScaledSkill));
    }

    public sealed record ScorecardDto(
        string? Indicator, string? Period, int Panels, IReadOnlyList<ScorecardExpertDto> Experts, ScorecardSummaryDto Consensus, ScorecardSummaryDto Naive,
        DateOnly WeightsKnownBefore, double PseudoForecasts, string Caution, BenchmarkComparisonDto? Benchmarks = null,
        int? Total = null, int Offset = 0, int? Limit = null);

    /// <summary>The most experts one page of <c>GET /api/scorecard</c> carries.</summary>
    public const int MaxPage = 1000;

    /// <summary>One benchmark scored like an expert; <c>comparedScaledMae</c> is its scaled MAE on the consensus's question-periods (null unless it covers all).</summary>
    public sealed record BenchmarkScoreDto(string Benchmark, ScorecardSummaryDto Summary, double? ComparedScaledMae);

    /// <summary>The consensus against the best benchmark on the same <c>n</c> question-periods: <c>skillVsBest</c> = 1 − consensus scaled MAE / best scaled MAE.</summary>
    public sealed record BenchmarkComparisonDto(IReadOnlyList<BenchmarkScoreDto> Benchmarks, int N, double? ConsensusScaledMae, string? Best, double? BestScaledMae, double? SkillVsBest)
    {
        public static BenchmarkComparisonDto From(Core.Scoring.BenchmarkComparison c) => new(
            c.Benchmarks.Select(b => new BenchmarkScoreDto(b.Key, ScorecardSummaryDto.From(b.Summary), F(b.ComparedScaledMae))).ToList(),
            c.N, F(c.ConsensusScaledMae), c.Best, F(c.BestScaledMae), F(c.SkillVsBest));
    }

    /// <summary>One panel's backtest: <c>hasHistory</c> false means nobody had a record before it closed, so there is no weighted result (null).</summary>
    /// <remarks>
    /// Skill of the equal-weight consensus: <c>skillVsNaive</c> = 1 − its scaled MAE / the no-change forecast's (<c>naiveScaledMae</c>)
    /// on the <c>nNaive</c> question-periods with a scale and a no-change forecast; <c>skillVsBest</c> = 1 − its scaled MAE /
    /// the scaled MAE of the best benchmark (<c>best</c>, <c>bestScaledMae</c>) on the <c>n</c> scored question-periods.
    /// <c>weightedSkillVsNaive</c> and <c>weightedSkillVsBest</c>: the same for the track-record consensus (null without history).
    /// </remarks>
    public sealed record BacktestPanelDto(
        int PanelId, string Panel, DateOnly ClosedOn, int HistoryItems, bool HasHistory, int N, double? EqualScaledMae, double? WeightedScaledMae, double? Difference,
        int NNaive = 0, double? NaiveScaledMae = null, double? SkillVsNaive = null, string? Best = null, double? BestScaledMae = null, double? SkillVsBest = null,
        double? WeightedSkillVsNaive = null, double? WeightedSkillVsBest = null);

    /// <summary>Equal against weighted over the panels with history; n = question-periods scored.</summary>
    public sealed record BacktestPooledDto(int N, int Panels, double? EqualScaledMae, double? WeightedScaledMae, double? Difference);

    public sealed record BacktestDto(IReadOnlyList<BacktestPanelDto> Panels, BacktestPooledDto Pooled, double PseudoForecasts, string Caution);

    public static IEndpointRouteBuilder MapScorecardApi(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/api/scorecard").WithTags("Scorecard").RequireAuthorization(AuthSetup.StaffPolicy);
        group.MapGet("/", GetScorecard).WithName("GetScorecard")
            .WithSummary("Per expert (by external key) and for the consensus and the no-change forecast: n, MAE, mean error, RMSE, scaled MAE, coverage and interval score; optional filters indicator and period, and paging with limit (1-1000) and offset (total: experts before paging).");
        group.MapGet("/backtest", GetBacktest).WithName("GetBacktest")
            .WithSummary("Per past panel and pooled: scaled MAE of the equal-weight and the track-record consensus, weights known before each panel closed; per panel, the consensus's skill against no change and against the best benchmark.");
        app.MapGet("/api/panels/{id:int}/consensus/compare", CompareConsensus).WithTags("Panels").RequireAuthorization(AuthSetup.StaffPolicy)
            .WithName("CompareConsensus")
            .WithSummary("Equal-weight and track-record consensus of the last closed round side by side, with the members' weights by panel code.");
        return app;
    }

    /// <summary>
    /// The scorecard, optionally one page of its experts (<c>limit</c>, <c>offset</c>, in rank
    /// order); <c>total</c> is the number of experts before paging, and ranks and weights are always
    /// those of the whole scorecard. Without paging every expert is listed, as before.
    /// </summary>
    public static async Task<Results<Ok<ScorecardDto>, ValidationProblem>> GetScorecard(
        string? indicator, string? period, int? limit, int? offset, ScorecardService scorecard)
    {
        var errors = new Dictionary<string, string[]>();
        if (limit is < 1 or > MaxPage)
        {
            errors["limit"] = [$"limit is 1 to {MaxPage}."];
        }
        if (offset is < 0)
        {
            errors["offset"] = ["offset is 0 or more."];
        }
        if (errors.Count > 0)
        {
            return TypedResults.ValidationProblem(errors, title: "The input has errors.");
        }
        var card = await BuildScorecardAsync(indicator, period, scorecard);
        var page = card.Experts.Skip(offset ?? 0).Take(limit ?? int.MaxValue).ToList();
        return TypedResults.Ok(card with { Experts = page, Total = card.Experts.Count, Offset = offset ?? 0, Limit = limit });
    }

    /// <summary>The whole scorecard, as the files (CSV, PDF) carry it.</summary>
    public static async Task<ScorecardDto> BuildScorecardAsync(string? indicator, string? period, ScorecardService scorecard)
    {
        var view = await scorecard.ScorecardAsync(new ScorecardFilter(Blank(indicator), Blank(period)));
        var experts = view.Experts.Select(l =>
        {
            var f = l.Score.Final;
            return new ScorecardExpertDto(
                l.Expert.DisplayKey, f.N, F(f.Mae), F(f.MeanError), F(f.Rmse), f.NMape, F(f.Mape),
                f.NScaled, F(f.ScaledMae), F(f.ScaledMeanError), l.Score.Bias?.ToString(),
                f.NRange, F(f.Coverage), F(f.IntervalScore), f.NRangeScaled, F(f.ScaledIntervalScore),
                f.NScaledNaive, F(f.ScaledSkill), l.Score.FinalPaired.NScaled, F(l.Score.FirstToFinalChange),
                l.Score.Ranked, l.Score.Rank, l.PointWeight.N, F(l.PointWeight.Weight), l.RangeWeight?.N, F(l.RangeWeight?.Weight));
        }).ToList();
        return new ScorecardDto(view.Filter.Indicator, view.Filter.Period, view.Panels, experts,
            ScorecardSummaryDto.From(view.Consensus), ScorecardSummaryDto.From(view.Naive), view.WeightsKnownBefore, view.PseudoForecasts, Caution,
            view.Benchmarks is null ? null : BenchmarkComparisonDto.From(view.Benchmarks), experts.Count);
    }

    public static async Task<Ok<BacktestDto>> GetBacktest(ScorecardService scorecard)
    {
        var view = await scorecard.BacktestAsync();
        var panels = view.Panels.Select(l =>
        {
            var c = l.Result.Comparison;
            var equal = l.Result.EqualSkill;
            var weighted = l.HasHistory ? l.Result.WeightedSkill : null;
            return new BacktestPanelDto(l.Panel.Id, l.Panel.DisplayKey, l.Result.ClosedOn, l.Result.HistoryItems, l.HasHistory, c.N,
                F(c.EqualScaledMae), l.HasHistory ? F(c.WeightedScaledMae) : null, l.HasHistory ? F(c.Difference) : null,
                equal?.Consensus.NScaledNaive ?? 0, F(equal?.Consensus.ScaledNaiveMae), F(equal?.SkillVsNaive), equal?.Benchmarks.Best,
                F(equal?.Benchmarks.BestScaledMae), F(equal?.SkillVsBest), F(weighted?.SkillVsNaive), F(weighted?.SkillVsBest));
        }).ToList();
        var p = view.Pooled;
        return TypedResults.Ok(new BacktestDto(
            panels, new BacktestPooledDto(p.N, view.Panels.Count(l => l.HasHistory && l.Result.Comparison.N > 0), F(p.EqualScaledMae), F(p.WeightedScaledMae), F(p.Difference)),
            view.PseudoForecasts, Caution));
    }

    public static async Task<Results<Ok<ConsensusComparison>, ProblemHttpResult>> CompareConsensus(int id, ScorecardService scorecard)
    {
        var comparison = await scorecard.CompareAsync(id);
        return comparison is null ? ApiResults.NotFound($"Panel {id} does not exist or has no closed round.") : TypedResults.Ok(comparison);
    }

    private static string? Blank(string? text) => string.IsNullOrWhiteSpace(text) ? null : text.Trim();

    /// <summary>A figure as JSON carries it: null unless finite (JSON has no NaN or infinity).</summary>
    private static double? F(double? value) => Figures.Finite(value);
}
