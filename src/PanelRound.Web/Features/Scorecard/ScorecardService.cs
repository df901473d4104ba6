using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Core.Domain;
using PanelRound.Core.Scoring;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>Which items the scorecard looks at: one indicator (question) and/or one target period; null = all.</summary>
public sealed record ScorecardFilter(string? Indicator = null, string? Period = null)
{
    public bool Matches(ScoredItem item, ScoringData data) =>
        (Indicator is null || string.Equals(IndicatorOf(item, data), Indicator, StringComparison.Ordinal))
        && (Period is null || string.Equals(item.Period, Period, StringComparison.Ordinal));

    internal static string IndicatorOf(ScoredItem item, ScoringData data) =>
        data.Panels.TryGetValue(item.PanelKey, out var p) ? p.Questions.First(q => q.Key == item.QuestionKey).IndicatorKey : item.QuestionKey;
}

/// <summary>One expert's line: the core's score, the name (reviewer pages only) and the weight a panel closing today would give.</summary>
/// <param name="Score">The scorecard line (final-round summary, first-to-final change, rank, bias).</param>
/// <param name="Expert">The expert.</param>
/// <param name="PointWeight">The weight from the scaled absolute errors, as known today.</param>
/// <param name="RangeWeight">The weight from the scaled interval scores (Range panels), as known today; null without range forecasts.</param>
/// <param name="RelativePointWeight">PointWeight divided by the pool-average weight (1 = an average record).</param>
/// <param name="RelativeRangeWeight">RangeWeight divided by the pool-average weight.</param>
public sealed record ScorecardLine(
    ExpertScore Score, ScoredExpert Expert, ExpertWeight PointWeight, ExpertWeight? RangeWeight, double RelativePointWeight, double? RelativeRangeWeight);

public sealed record ScorecardView(
    ScorecardFilter Filter, IReadOnlyList<ScorecardLine> Experts, ErrorSummary Consensus, ErrorSummary Naive,
    IReadOnlyList<string> Indicators, IReadOnlyList<string> Periods, int Panels, DateOnly WeightsKnownBefore, double PseudoForecasts,
    IReadOnlyList<ScoredPanel> ConcludedPanels, BenchmarkComparison? Benchmarks = null);

/// <summary>One forecast of an expert against its outcome.</summary>
public sealed record ForecastPoint(
    ScoredPanel Panel, ScoredQuestion Question, ScoredItem Item, double? ScaledError, bool? Covered);

/// <summary>An expert's forecasts of one indicator, with the indicator's observed series.</summary>
public sealed record IndicatorTrack(
    string IndicatorKey, string Name, string Unit, int Decimals, IReadOnlyList<ForecastPoint> Final, IReadOnlyList<ForecastPoint> Earlier,
    IReadOnlyList<(Period Period, double Value)> Observed, ErrorSummary Summary);

public sealed record ExpertScorecardView(ScoredExpert Expert, ExpertScore? Score, IReadOnlyList<IndicatorTrack> Tracks);

/// <summary>One question-period of a concluded panel: consensus, outcome and the no-change forecast side by side.</summary>
public sealed record PanelTargetLine(
    ScoredQuestion Question, string Period, ConsensusEntry? Consensus, OutcomeValue? Outcome,
    double? ConsensusError, double? NaiveError, double? ScaledConsensusError, double? ScaledNaiveError);

public sealed record PanelScorecardView(
    ScoredPanel Panel, IReadOnlyList<PanelTargetLine> Targets, ErrorSummary Consensus, ErrorSummary Naive, ErrorSummary Experts,
    BenchmarkComparison? Benchmarks = null);

/// <summary>One panel's backtest line.</summary>
/// <param name="Panel">The panel.</param>
/// <param name="Result">Its backtest.</param>
/// <param name="HasHistory">True when its weights rested on a record (someone had scored forecasts known before it closed); without, weighted equals equal by construction and is not a result.</param>
public sealed record BacktestLine(ScoredPanel Panel, BacktestPanelResult Result, bool HasHistory);

/// <summary>The backtest of every panel with outcomes.</summary>
/// <param name="Panels">Per panel, by closing day.</param>
/// <param name="Pooled">Equal against weighted over the scored question-periods of the panels with history only.</param>
/// <param name="PseudoForecasts">k.</param>
public sealed record BacktestView(IReadOnlyList<BacktestLine> Panels, BacktestComparison Pooled, double PseudoForecasts);

/// <summary>Equal-weight and track-record consensus of one question-period.</summary>
public sealed record ComparedValue(double? Value, double? Low, double? High, int N, string Method)
{
    public static ComparedValue Of(ConsensusEntry c) => new(Figures.Finite(c.Value), Figures.Finite(c.Low), Figures.Finite(c.High), c.N, c.Method);
}

public sealed record ComparedTarget(int QuestionId, string Question, string Indicator, string Period, string Format, ComparedValue Equal, ComparedValue TrackRecord, double? Difference);

public sealed record ConsensusComparison(
    int PanelId, string Weighting, int Round, PanelWeights Weights, IReadOnlyList<ComparedTarget> Targets);

/// <summary>The reviewer's views of scores: the scorecard, an expert's record, a panel's record, the backtest, equal against weighted consensus.</summary>
public sealed class ScorecardService(
    PanelRoundDbContext db, ScoringDataLoader scoring, TrackRecordWeightsService weights, ConsensusPublisher publisher,
    IOptions<ScoringOptions> options, TimeProvider clock, BenchmarkScoring benchmarkScoring)
{
    private double K => options.Value.PseudoForecasts;

    public async Task<ScorecardView> ScorecardAsync(ScorecardFilter filter, ScoringData? data = null)
    {
        data ??= await scoring.LoadAsync();
        var items = data.ExpertItems.Where(i => filter.Matches(i, data)).ToList();
        var consensus = data.ConsensusItems.Where(i => filter.Matches(i, data)).ToList();
        var scores = Core.Scoring.Scorecard.ForExperts(items, ScorecardOptions.Default);

        // The weights a panel closing today would give, from every scored item known before today (filters do not apply).
        var today = DateOnly.FromDateTime(clock.GetUtcNow().UtcDateTime);
        var known = data.ExpertItems.Where(i => Backtest.IsKnownBefore(i, today)).ToList();
        var keys = scores.Select(s => s.ExpertKey).ToList();
        var point = TrackRecordWeights.Compute(TrackRecordWeights.Records(known, TrackRecordMeasure.ScaledAbsoluteError), keys, K);
        var hasRange = data.ExpertItems.Any(i => i.IsRange);
        var range = hasRange ? TrackRecordWeights.Compute(TrackRecordWeights.Records(known, TrackRecordMeasure.ScaledIntervalScore), keys, K) : null;
        var lines = scores.Select((s, i) => new ScorecardLine(
            s, data.Experts[s.ExpertKey], point.Experts[i], range?.Experts[i],
            point.Experts[i].Weight * keys.Count, range is null ? null : range.Experts[i].Weight * keys.Count)).ToList();

        var indicators = data.ExpertItems.Select(i => ScorecardFilter.IndicatorOf(i, data)).Distinct(StringComparer.Ordinal).Order(StringComparer.Ordinal).ToList();
        var periods = data.ExpertItems.Select(i => i.Period).Distinct(StringComparer.Ordinal)
            .OrderBy(p => Period.TryParse(p, out var x) ? x.Value.SortKey : int.MaxValue).ToList();
        return new ScorecardView(
            filter, lines, Core.Scoring.Scorecard.ForConsensus(consensus), Core.Scoring.Scorecard.ForNaiveBaseline(items), indicators, periods,
            items.Select(i => i.PanelKey).Distinct(StringComparer.Ordinal).Count(), today, K,
            [.. data.Panels.Values.OrderByDescending(p => p.ClosedOn)],
            BenchmarkSkill.Compare(consensus, [.. (await benchmarkScoring.ItemsAsync(data)).Where(i => filter.Matches(i, data))]));
    }

    public async Task<ExpertScorecardView?> ExpertAsync(int expertId)
    {
        var data = await scoring.LoadAsync();
        var expert = data.Experts.Values.FirstOrDefault(e => e.Id == expertId);
        if (expert is null)
        {
            var e = await db.Experts.AsNoTracking().FirstOrDefaultAsync(x => x.Id == expertId);
            return e is null ? null : new ExpertScorecardView(
                new ScoredExpert(e.Id, ScoringDataLoader.ExpertKeyOf(e.Id), ScoringDataLoader.ExpertKeyOf(e.ExternalKey, e.Email), e.Name), null, []);
        }
        var own = data.ExpertItems.Where(i => i.ExpertKey == expert.Key).ToList();
        // The rank is a place among all experts: score everyone, as the unfiltered scorecard does, and take this expert's line.
        var score = Core.Scoring.Scorecard.ForExperts(data.ExpertItems, ScorecardOptions.Default).SingleOrDefault(s => s.ExpertKey == expert.Key);
        var points = own.Select(i =>
        {
            var panel = data.Panels[i.PanelKey];
            var question = panel.Questions.First(q => q.Key == i.QuestionKey);
            bool? covered = i is { P10: { } l, P90: { } h } ? l <= i.Outcome && i.Outcome <= h : null;
            return new ForecastPoint(panel, question, i, i.HasScale ? Math.Abs(i.Error) / i.Scale : null, covered);
        }).ToList();
        var indicatorIds = points.Select(p => p.Question.IndicatorId).Distinct().ToList();
        var observed = await db.Observations.AsNoTracking().Where(o => o.SupersededAt == null && indicatorIds.Contains(o.IndicatorId))
            .OrderBy(o => o.PeriodSortKey).Select(o => new { o.IndicatorId, o.Period, o.Value }).ToListAsync();
        var tracks = points.GroupBy(p => p.Question.IndicatorKey).OrderBy(g => g.Key, StringComparer.Ordinal).Select(g =>
        {
            var q = g.First().Question;
            var final = g.Where(p => p.Item.IsFinalRound).OrderBy(p => p.Panel.ClosedOn).ThenBy(p => Period.Parse(p.Item.Period)).ToList();
            var last = g.Max(p => Period.Parse(p.Item.Period));
            var earliestStart = g.Min(p => p.Panel.StartsOn);
            var series = observed.Where(o => o.IndicatorId == q.IndicatorId).Select(o => (Period: Period.Parse(o.Period), o.Value))
                .Where(o => o.Period <= last && o.Period.EndDate >= earliestStart.AddYears(-3)).ToList();
            return new IndicatorTrack(g.Key, q.IndicatorName, q.Unit, q.Decimals, final,
                g.Where(p => !p.Item.IsFinalRound).ToList(), series, ForecastErrors.Summarise([.. final.Select(p => p.Item)]));
        }).ToList();
        return new ExpertScorecardView(expert, score, tracks);
    }

    public async Task<PanelScorecardView?> PanelAsync(int panelId)
    {
        var data = await scoring.LoadAsync();
        var panel = data.PanelById(panelId);
        if (panel is null)
        {
            return null;
        }
        var targets = new List<PanelTargetLine>();
        foreach (var q in panel.Questions)
        {
            foreach (var period in q.Periods)
            {
                var c = data.Consensus.FirstOrDefault(x => x.QuestionId == q.Id && x.Period == period);
                var outcome = data.Outcomes.GetValueOrDefault((q.IndicatorId, period));
                double? ce = c is not null && outcome is not null ? c.Value - outcome.Value : null;
                double? ne = q.NaiveForecast is { } naive && outcome is not null ? naive - outcome.Value : null;
                var scale = q.Scale.TryGetValue(out var s) ? s : null;
                targets.Add(new PanelTargetLine(q, period, c, outcome, ce, ne,
                    ce is { } a && scale is { } s1 ? Math.Abs(a) / s1 : null, ne is { } b && scale is { } s2 ? Math.Abs(b) / s2 : null));
            }
        }
        var own = data.ExpertItems.Where(i => i.PanelKey == panel.Key && i.IsFinalRound).ToList();
        var consensusItems = data.ConsensusItems.Where(i => i.PanelKey == panel.Key).ToList();
        return new PanelScorecardView(panel, targets,
            Core.Scoring.Scorecard.ForConsensus(consensusItems),
            Core.Scoring.Scorecard.ForNaiveBaseline(own),
            ForecastErrors.Summarise(own),
            BenchmarkSkill.Compare(consensusItems, [.. (await benchmarkScoring.ItemsAsync(data)).Where(i => i.PanelKey == panel.Key)]));
    }

    /// <summary>
    /// The backtest over the database's panels: each panel's consensus rebuilt with the weights
    /// known before it closed, with the panel's own consensus settings, against equal weights,
    /// and each against the no-change forecast and the panel's benchmarks.
    /// The pooled comparison takes only the panels whose weights rested on a record: without
    /// one, the weights are equal and the difference is 0 by construction, not evidence.
    /// </summary>
    public async Task<BacktestView> BacktestAsync(ScoringData? data = null)
    {
        data ??= await scoring.LoadAsync();
        var benchmarks = await benchmarkScoring.ItemsAsync(data);
        var lines = new List<BacktestLine>();
        int n = 0;
        double sumEqual = 0, sumWeighted = 0;
        foreach (var panel in BacktestPanel.FromItems(data.ExpertItems))
        {
            var scored = data.Panels[panel.PanelKey];
            var run = Backtest.Run([panel], data.ExpertItems, new BacktestOptions
            {
                Settings = FeedbackCalculator.SettingsOf(scored.Settings),
                PseudoForecasts = K,
            }, [.. benchmarks.Where(i => i.PanelKey == panel.PanelKey)]);
            var result = run.Panels[0];
            var hasHistory = result.HistoryItems > 0
                && (result.PointWeights?.PoolMeanError is not null || result.RangeWeights?.PoolMeanError is not null);
            lines.Add(new BacktestLine(scored, result, hasHistory));
            if (hasHistory && result.Comparison is { N: > 0, EqualScaledMae: { } eq, WeightedScaledMae: { } we })
            {
                n += result.Comparison.N;
                sumEqual += eq * result.Comparison.N;
                sumWeighted += we * result.Comparison.N;
            }
        }
        var pooled = n == 0 ? new BacktestComparison(0, null, null) : new BacktestComparison(n, sumEqual / n, sumWeighted / n);
        return new BacktestView(lines, pooled, K);
    }

    /// <summary>
    /// Equal-weight and track-record consensus of a panel's last closed round, side by side, with
    /// the members' weights (as of the panel's conclusion, or now while it runs); null when the
    /// panel does not exist or no round has closed. The weights shown are the ones the track-record
    /// consensus is computed with (one set per response format), from one load of the scoring data.
    /// </summary>
    public async Task<ConsensusComparison?> CompareAsync(int panelId, ScoringData? data = null) =>
        await PanelSnapshot.LoadAsync(db, panelId) is { } snapshot ? await CompareAsync(snapshot, data) : null;

    /// <summary>The comparison of a panel already read (see the other overload); the scoring data is read once, here, unless given.</summary>
    public async Task<ConsensusComparison?> CompareAsync(PanelSnapshot snapshot, ScoringData? data = null)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var panel = snapshot.Panel;
        var last = snapshot.LastClosedRound;
        if (last is null)
        {
            return null;
        }
        var asOf = panel.ConcludedAt ?? clock.GetUtcNow().UtcDateTime;
        data ??= await scoring.LoadAsync();
        var detail = weights.Detail(panel.Id, [.. panel.Questions.Select(q => q.Format).Distinct()], snapshot.Members, asOf, data);
        var answers = snapshot.AnswersOf(last);
        var equal = publisher.Compute(panel, answers, null, null);
        var weighted = publisher.Compute(panel, answers, detail.ByFormat, null).ToDictionary(c => (c.QuestionId, c.Period));
        var panelId = panel.Id;
        var questions = panel.Questions.ToDictionary(q => q.Id);
        var targets = equal.Select(e =>
        {
            var w = weighted[(e.QuestionId, e.Period)];
            var q = questions[e.QuestionId];
            return new ComparedTarget(e.QuestionId, q.Label, q.Indicator!.Key, e.Period, q.Format.ToString(),
                ComparedValue.Of(e), ComparedValue.Of(w),
                Figures.Finite(w.Value - e.Value));
        }).ToList();
        return new ConsensusComparison(panelId, panel.Settings.Weighting.ToString(), last.Number, detail, targets);
    }
}
