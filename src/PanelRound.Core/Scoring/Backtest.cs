using PanelRound.Core.Statistics;

namespace PanelRound.Core.Scoring;

/// <summary>One expert's final-round answer to a backtested question-period: a point or a range.</summary>
public sealed record BacktestAnswer
{
    private BacktestAnswer(string expertKey, double? value, RangeAnswer? range)
    {
        ExpertKey = Preconditions.CheckNotNull(expertKey);
        Value = value;
        Range = range;
    }

    /// <summary>The expert's key.</summary>
    public string ExpertKey { get; }

    /// <summary>The point answer, or null for a range answer.</summary>
    public double? Value { get; }

    /// <summary>The range answer, or null for a point answer.</summary>
    public RangeAnswer? Range { get; }

    /// <summary>A point answer (finite).</summary>
    public static BacktestAnswer Point(string expertKey, double value) => new(expertKey, Preconditions.CheckFinite(value), null);

    /// <summary>A range answer.</summary>
    public static BacktestAnswer OfRange(string expertKey, RangeAnswer range) => new(expertKey, null, Preconditions.CheckNotNull(range));
}

/// <summary>A backtested question-period: the final-round answers, the outcome and the error scale.</summary>
/// <param name="QuestionKey">The question's key.</param>
/// <param name="Period">The target period.</param>
/// <param name="Outcome">The outcome, finite.</param>
/// <param name="Scale">The error scale; when not finite and positive the target is shown but not scored.</param>
/// <param name="Answers">At least one answer, all points or all ranges, at most one per expert.</param>
/// <param name="NaiveForecast">The no-change forecast (<see cref="ScoredItem.NaiveForecast"/>); NaN when unavailable, which leaves the target out of the skill against it.</param>
public sealed record BacktestTarget(string QuestionKey, string Period, double Outcome, double Scale, IReadOnlyList<BacktestAnswer> Answers, double NaiveForecast = double.NaN);

/// <summary>A past panel to backtest.</summary>
/// <param name="PanelKey">The panel's key.</param>
/// <param name="ClosedOn">The day it closed: only what was known before this day may shape its weights.</param>
/// <param name="Targets">Its question-periods with outcomes.</param>
public sealed record BacktestPanel(string PanelKey, DateOnly ClosedOn, IReadOnlyList<BacktestTarget> Targets)
{
    /// <summary>
    /// The panels in a set of scored expert items: their final-round items grouped by panel and
    /// question-period, ordered by closing day then panel key.
    /// </summary>
    /// <param name="items">Expert items (not consensus items); the items of one panel must agree on its closing day.</param>
    /// <remarks>The first item of a question-period supplies its outcome, scale and no-change forecast; a range item becomes a range answer.</remarks>
    public static IReadOnlyList<BacktestPanel> FromItems(IReadOnlyList<ScoredItem> items)
    {
        ScoredItem.CheckItems(items, nameof(items));
        var panels = new List<BacktestPanel>();
        foreach (var panel in items.Where(i => i.IsFinalRound).GroupBy(i => i.PanelKey, StringComparer.Ordinal))
        {
            var closedOn = panel.First().PanelClosedOn;
            if (panel.Any(i => i.PanelClosedOn != closedOn))
            {
                throw new ArgumentException($"The items of panel '{panel.Key}' disagree on its closing day.", nameof(items));
            }

            var targets = panel
                .GroupBy(i => (i.QuestionKey, i.Period))
                .Select(t => new BacktestTarget(
                    t.Key.QuestionKey,
                    t.Key.Period,
                    t.First().Outcome,
                    t.First().Scale,
                    [.. t.Select(i => i is { P10: { } p10, P50: { } p50, P90: { } p90 }
                        ? BacktestAnswer.OfRange(i.ExpertKey, new RangeAnswer(p10, p50, p90))
                        : BacktestAnswer.Point(i.ExpertKey, i.Value!.Value))],
                    t.First().NaiveForecast))
                .OrderBy(t => t.QuestionKey, StringComparer.Ordinal)
                .ThenBy(t => t.Period, PeriodOrder.Instance)
                .ToList();
            panels.Add(new BacktestPanel(panel.Key, closedOn, targets));
        }

        return [.. panels.OrderBy(p => p.ClosedOn).ThenBy(p => p.PanelKey, StringComparer.Ordinal)];
    }
}

/// <summary>Settings of the backtest.</summary>
public sealed record BacktestOptions
{
    /// <summary>The defaults: default feedback settings, k = 5.</summary>
    public static BacktestOptions Default { get; } = new();

    /// <summary>The consensus settings (outlier rule, trim fraction, quantile method).</summary>
    public FeedbackSettings Settings { get; init => field = Preconditions.CheckNotNull(value, nameof(Settings)); } = FeedbackSettings.Default;

    /// <summary>k, the pseudo-forecasts of <see cref="TrackRecordWeights.Compute"/>, ≥ 0. Default 5.</summary>
    public double PseudoForecasts
    {
        get;
        init => field = Preconditions.CheckInRange(value, 0, double.MaxValue, nameof(PseudoForecasts));
    } = TrackRecordWeights.DefaultPseudoForecasts;
}

/// <summary>Equal-weight against track-record-weighted consensus, over some scored question-periods.</summary>
/// <param name="N">The number of question-periods with a valid scale.</param>
/// <param name="EqualScaledMae">Mean |equal consensus − outcome| / scale; null when N = 0.</param>
/// <param name="WeightedScaledMae">Mean |weighted consensus − outcome| / scale; null when N = 0.</param>
public sealed record BacktestComparison(int N, double? EqualScaledMae, double? WeightedScaledMae)
{
    /// <summary>WeightedScaledMae − EqualScaledMae: negative means weighting would have paid.</summary>
    public double? Difference => WeightedScaledMae - EqualScaledMae;
}

/// <summary>One backtested question-period.</summary>
/// <param name="QuestionKey">The question's key.</param>
/// <param name="Period">The target period.</param>
/// <param name="Outcome">The outcome.</param>
/// <param name="Scale">The error scale.</param>
/// <param name="IsRange">True for range answers (weights from the scaled interval score).</param>
/// <param name="Equal">The equal-weight consensus.</param>
/// <param name="Weighted">The track-record-weighted consensus.</param>
/// <param name="EqualScaledError">|Equal.Value − outcome| / scale; null without a valid scale.</param>
/// <param name="WeightedScaledError">|Weighted.Value − outcome| / scale; null without a valid scale.</param>
public sealed record BacktestTargetResult(
    string QuestionKey,
    string Period,
    double Outcome,
    double Scale,
    bool IsRange,
    ConsensusValue Equal,
    ConsensusValue Weighted,
    double? EqualScaledError,
    double? WeightedScaledError);

/// <summary>A rebuilt consensus of a backtested panel against the no-change forecast and against the benchmarks.</summary>
/// <param name="Consensus">
/// The consensus scored like an expert (<see cref="ForecastErrors.Summarise"/> of one point item per question-period):
/// its <see cref="ErrorSummary.ScaledSkill"/> is the skill against no change, on the <see cref="ErrorSummary.NScaledNaive"/>
/// question-periods with a scale and a no-change forecast, and <see cref="ErrorSummary.ScaledNaiveMae"/> is the no-change forecast's scaled MAE there.
/// </param>
/// <param name="Benchmarks">The consensus against the benchmarks on its scaled question-periods (<see cref="BenchmarkSkill.Compare"/>).</param>
public sealed record BacktestSkill(ErrorSummary Consensus, BenchmarkComparison Benchmarks)
{
    /// <summary>1 − scaled MAE of the consensus / of the no-change forecast; null without such question-periods.</summary>
    public double? SkillVsNaive => Consensus.ScaledSkill;

    /// <summary>1 − scaled MAE of the consensus / of the best benchmark; null without a benchmark covering every question-period.</summary>
    public double? SkillVsBest => Benchmarks.SkillVsBest;
}

/// <summary>The backtest of one panel.</summary>
/// <param name="PanelKey">The panel's key.</param>
/// <param name="ClosedOn">The day it closed.</param>
/// <param name="HistoryItems">The number of scored items known before that day (the only ones the weights could use).</param>
/// <param name="PointWeights">The weights used for its point questions (scaled absolute error records); null when it has none.</param>
/// <param name="RangeWeights">The weights used for its range questions (scaled interval score records); null when it has none.</param>
/// <param name="Comparison">Equal against weighted over its scored question-periods.</param>
/// <param name="Targets">Its question-periods, by question key then period.</param>
/// <param name="EqualSkill">The equal-weight consensus against no change and the benchmarks.</param>
/// <param name="WeightedSkill">The track-record-weighted consensus against no change and the benchmarks.</param>
public sealed record BacktestPanelResult(
    string PanelKey,
    DateOnly ClosedOn,
    int HistoryItems,
    WeightSet? PointWeights,
    WeightSet? RangeWeights,
    BacktestComparison Comparison,
    IReadOnlyList<BacktestTargetResult> Targets,
    BacktestSkill? EqualSkill = null,
    BacktestSkill? WeightedSkill = null);

/// <summary>The backtest of every panel, and pooled over all their question-periods.</summary>
/// <param name="Panels">Per panel, by closing day then panel key.</param>
/// <param name="Pooled">Equal against weighted over every scored question-period of every panel.</param>
public sealed record BacktestResult(IReadOnlyList<BacktestPanelResult> Panels, BacktestComparison Pooled);

/// <summary>
/// The backtest of track-record weights: each past panel's consensus rebuilt with the weights
/// that were known before it closed, compared with the equal-weight consensus.
/// </summary>
/// <remarks>
/// <para>No look-ahead: the weights of a panel closed on day D come only from the scored items
/// with <see cref="IsKnownBefore"/>(item, D): an outcome recorded before D, from a panel that
/// itself closed before D. From those, <see cref="TrackRecordWeights.Records"/> (final-round
/// items with a valid scale) and <see cref="TrackRecordWeights.Compute"/> over the panel's
/// experts (every expert answering any of its question-periods), with the scaled absolute
/// error for point questions and the scaled interval score for range questions.</para>
/// <para>Consensus: <see cref="Consensus.ForPoint"/> or <see cref="Consensus.ForRange"/> with the
/// settings, without weights (equal) and with the experts' weights (weighted); the point scored
/// is the consensus value (the central value for ranges). Error = |value − outcome| / scale,
/// after Hyndman &amp; Koehler (2006); question-periods without a valid scale are listed but not scored.</para>
/// <para>Skill: each rebuilt consensus (equal and weighted) is scored like an expert, one point item per
/// question-period with the target's outcome, scale and no-change forecast, and compared with the no-change
/// forecast (<see cref="ErrorSummary.ScaledSkill"/>) and with the benchmark forecasts of the same panel
/// (<see cref="BenchmarkSkill.Compare"/>): the same rules as the scorecard's, applied per past panel. The
/// benchmarks come from the reference series before the panel's start, so they look no further ahead
/// than the panel did.</para>
/// <para>The published evidence on whether weighting beats the simple average is mixed; the
/// result reports both figures and their difference and draws no conclusion.</para>
/// </remarks>
public static class Backtest
{
    /// <summary>
    /// True when the item could have informed weights for a panel closing on <paramref name="closedOn"/>:
    /// its outcome was recorded before that day and its own panel closed before that day.
    /// </summary>
    public static bool IsKnownBefore(ScoredItem item, DateOnly closedOn)
    {
        ArgumentNullException.ThrowIfNull(item);
        return item.OutcomeKnownOn < closedOn && item.PanelClosedOn < closedOn;
    }

    /// <summary>Backtests the panels found in the items (<see cref="BacktestPanel.FromItems"/>) against those same items.</summary>
    /// <param name="items">Scored expert items of every panel (not consensus items).</param>
    /// <param name="options">Consensus settings and k.</param>
    public static BacktestResult Run(IReadOnlyList<ScoredItem> items, BacktestOptions options) =>
        Run(BacktestPanel.FromItems(items), items, options);

    /// <summary>Backtests the given panels, taking weights from the history known before each closed.</summary>
    /// <param name="panels">The panels to backtest.</param>
    /// <param name="history">Every scored expert item (any panel, any round); filtered per panel by <see cref="IsKnownBefore"/>.</param>
    /// <param name="options">Consensus settings and k.</param>
    public static BacktestResult Run(IReadOnlyList<BacktestPanel> panels, IReadOnlyList<ScoredItem> history, BacktestOptions options) =>
        Run(panels, history, options, static (item, panel) => IsKnownBefore(item, panel.ClosedOn));

    /// <summary>Backtests the given panels and sets each rebuilt consensus against the benchmarks of its panel.</summary>
    /// <param name="panels">The panels to backtest.</param>
    /// <param name="history">Every scored expert item (any panel, any round); filtered per panel by <see cref="IsKnownBefore"/>.</param>
    /// <param name="options">Consensus settings and k.</param>
    /// <param name="benchmarkItems">The benchmarks' items (one per benchmark key, panel, question and period); each panel uses its own.</param>
    public static BacktestResult Run(IReadOnlyList<BacktestPanel> panels, IReadOnlyList<ScoredItem> history, BacktestOptions options, IReadOnlyList<ScoredItem> benchmarkItems) =>
        Run(panels, history, options, static (item, panel) => IsKnownBefore(item, panel.ClosedOn), benchmarkItems);

    /// <summary>The backtest with a chosen history filter; the public overloads use <see cref="IsKnownBefore"/>.</summary>
    internal static BacktestResult Run(
        IReadOnlyList<BacktestPanel> panels,
        IReadOnlyList<ScoredItem> history,
        BacktestOptions options,
        Func<ScoredItem, BacktestPanel, bool> usableForWeights,
        IReadOnlyList<ScoredItem>? benchmarkItems = null)
    {
        ArgumentNullException.ThrowIfNull(panels);
        ScoredItem.CheckItems(history, nameof(history));
        ArgumentNullException.ThrowIfNull(options);
        benchmarkItems ??= [];
        ScoredItem.CheckItems(benchmarkItems, nameof(benchmarkItems));

        var results = new List<BacktestPanelResult>(panels.Count);
        int pooledN = 0;
        double pooledEqual = 0, pooledWeighted = 0;
        foreach (var panel in panels.OrderBy(p => p.ClosedOn).ThenBy(p => p.PanelKey, StringComparer.Ordinal))
        {
            ArgumentNullException.ThrowIfNull(panel, nameof(panels));
            CheckPanel(panel);
            var known = history.Where(i => usableForWeights(i, panel)).ToList();
            var experts = panel.Targets.SelectMany(t => t.Answers).Select(a => a.ExpertKey)
                .Distinct(StringComparer.Ordinal).Order(StringComparer.Ordinal).ToList();
            var hasPoint = panel.Targets.Any(t => t.Answers[0].Range is null);
            var hasRange = panel.Targets.Any(t => t.Answers[0].Range is not null);
            var pointWeights = hasPoint
                ? TrackRecordWeights.Compute(TrackRecordWeights.Records(known, TrackRecordMeasure.ScaledAbsoluteError), experts, options.PseudoForecasts)
                : null;
            var rangeWeights = hasRange
                ? TrackRecordWeights.Compute(TrackRecordWeights.Records(known, TrackRecordMeasure.ScaledIntervalScore), experts, options.PseudoForecasts)
                : null;

            var targets = new List<BacktestTargetResult>(panel.Targets.Count);
            var equalItems = new List<ScoredItem>(panel.Targets.Count);
            var weightedItems = new List<ScoredItem>(panel.Targets.Count);
            int n = 0;
            double sumEqual = 0, sumWeighted = 0;
            foreach (var target in panel.Targets.OrderBy(t => t.QuestionKey, StringComparer.Ordinal).ThenBy(t => t.Period, PeriodOrder.Instance))
            {
                var isRange = target.Answers[0].Range is not null;
                var set = isRange ? rangeWeights! : pointWeights!;
                var weights = target.Answers.Select(a => set.WeightOf(a.ExpertKey)).ToArray();
                ConsensusValue equal, weighted;
                if (isRange)
                {
                    var answers = target.Answers.Select(a => a.Range!).ToArray();
                    equal = Consensus.ForRange(answers, options.Settings);
                    weighted = Consensus.ForRange(answers, options.Settings, weights);
                }
                else
                {
                    var values = target.Answers.Select(a => a.Value!.Value).ToArray();
                    equal = Consensus.ForPoint(values, options.Settings);
                    weighted = Consensus.ForPoint(values, options.Settings, weights);
                }

                double? equalError = null, weightedError = null;
                if (double.IsFinite(target.Scale) && target.Scale > 0)
                {
                    equalError = Math.Abs(equal.Value - target.Outcome) / target.Scale;
                    weightedError = Math.Abs(weighted.Value - target.Outcome) / target.Scale;
                    n++;
                    sumEqual += equalError.Value;
                    sumWeighted += weightedError.Value;
                }

                targets.Add(new BacktestTargetResult(
                    target.QuestionKey, target.Period, target.Outcome, target.Scale, isRange, equal, weighted, equalError, weightedError));
                if (double.IsFinite(equal.Value) && double.IsFinite(weighted.Value))
                {
                    equalItems.Add(ConsensusItem(panel, target, equal.Value));
                    weightedItems.Add(ConsensusItem(panel, target, weighted.Value));
                }
            }

            var panelBenchmarks = benchmarkItems.Where(i => string.Equals(i.PanelKey, panel.PanelKey, StringComparison.Ordinal)).ToList();

            pooledN += n;
            pooledEqual += sumEqual;
            pooledWeighted += sumWeighted;
            results.Add(new BacktestPanelResult(
                panel.PanelKey, panel.ClosedOn, known.Count, pointWeights, rangeWeights, Comparison(n, sumEqual, sumWeighted), targets,
                Skill(equalItems, panelBenchmarks), Skill(weightedItems, panelBenchmarks)));
        }

        return new BacktestResult(results, Comparison(pooledN, pooledEqual, pooledWeighted));
    }

    private static BacktestSkill Skill(IReadOnlyList<ScoredItem> consensus, IReadOnlyList<ScoredItem> benchmarks) =>
        new(ForecastErrors.Summarise(consensus), BenchmarkSkill.Compare(consensus, benchmarks));

    /// <summary>A rebuilt consensus value as a final-round point item of its question-period.</summary>
    /// <remarks>Implementation note: the round and the outcome's date enter no score; the item only carries what scoring reads.</remarks>
    private static ScoredItem ConsensusItem(BacktestPanel panel, BacktestTarget target, double value) => new()
    {
        ExpertKey = "consensus",
        QuestionKey = target.QuestionKey,
        PanelKey = panel.PanelKey,
        Period = target.Period,
        Round = 1,
        IsFinalRound = true,
        Value = value,
        Outcome = target.Outcome,
        Scale = target.Scale,
        NaiveForecast = target.NaiveForecast,
        PanelClosedOn = panel.ClosedOn,
        OutcomeKnownOn = panel.ClosedOn,
    };

    private static BacktestComparison Comparison(int n, double sumEqual, double sumWeighted) =>
        n == 0 ? new BacktestComparison(0, null, null) : new BacktestComparison(n, sumEqual / n, sumWeighted / n);

    private static void CheckPanel(BacktestPanel panel)
    {
        ArgumentNullException.ThrowIfNull(panel.PanelKey, nameof(panel));
        ArgumentNullException.ThrowIfNull(panel.Targets, nameof(panel));
        foreach (var target in panel.Targets)
        {
            ArgumentNullException.ThrowIfNull(target, nameof(panel));
            ArgumentNullException.ThrowIfNull(target.Answers, nameof(panel));
            Preconditions.CheckFinite(target.Outcome, nameof(panel));
            var where = $"{panel.PanelKey}/{target.QuestionKey}/{target.Period}";
            if (target.Answers.Count == 0)
            {
                throw new ArgumentException($"Question-period {where} has no answers.", nameof(panel));
            }

            if (target.Answers.Any(a => a is null))
            {
                throw new ArgumentException($"Question-period {where} has a null answer.", nameof(panel));
            }

            var isRange = target.Answers[0].Range is not null;
            if (target.Answers.Any(a => (a.Range is not null) != isRange))
            {
                throw new ArgumentException($"Question-period {where} mixes point and range answers.", nameof(panel));
            }

            if (target.Answers.Select(a => a.ExpertKey).Distinct(StringComparer.Ordinal).Count() != target.Answers.Count)
            {
                throw new ArgumentException($"Question-period {where} has two answers from one expert.", nameof(panel));
            }
        }
    }
}

/// <summary>Orders period texts by time when they parse (<see cref="Domain.Period"/>), otherwise ordinally after them.</summary>
internal sealed class PeriodOrder : IComparer<string>
{
    public static readonly PeriodOrder Instance = new();

    public int Compare(string? x, string? y)
    {
        var px = Domain.Period.TryParse(x, out var a);
        var py = Domain.Period.TryParse(y, out var b);
        if (px && py)
        {
            var byTime = a!.Value.CompareTo(b!.Value);
            return byTime != 0 ? byTime : string.CompareOrdinal(x, y);
        }

        return px ? -1 : py ? 1 : string.CompareOrdinal(x, y);
    }
}
