using System.Text.Json;
using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Application;

/// <summary>The group statistics of one set of answers, as frozen and as shown (no identities, no positions).</summary>
public sealed record StatsView(
    int N, double Median, double Q1, double Q3, double Iqr, double? RelativeIqr, double TrimmedMean,
    double TrimmedMedian, double RetainedMin, double RetainedMax, int Excluded, double Min, double Max,
    IReadOnlyList<HistogramBin> Histogram)
{
    public static StatsView From(PointFeedback f) =>
        new(f.N, f.Median, f.Q1, f.Q3, f.Iqr, f.RelativeIqr, f.TrimmedMean, f.TrimmedMedian, f.RetainedMin, f.RetainedMax,
            f.ExcludedCount, f.Min, f.Max, f.Histogram.ToList());
}

/// <summary>For Range questions: the statistics per quantile and the quantile-averaged P10/P50/P90.</summary>
public sealed record RangeStatsView(StatsView P10, StatsView P50, StatsView P90, double AggregatedP10, double AggregatedP50, double AggregatedP90);

/// <summary>
/// The round feedback of one question-period, as frozen when the round closed. <see cref="Headline"/>
/// is the statistic that convergence is read from: the answers for Point questions, the P50s for
/// Range questions. <see cref="Shown"/> is the only part an expert ever sees.
/// </summary>
public sealed record FeedbackView(int QuestionId, string Period, int N, int MinimumGroupSize, bool Withheld, StatsView? Point, RangeStatsView? Range,
    AnonymousFeedback? Shown = null)
{
    public StatsView? Headline => Point ?? Range?.P50;

    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web);

    public string ToJson() => JsonSerializer.Serialize(this, Json);

    public static FeedbackView FromJson(string json) => JsonSerializer.Deserialize<FeedbackView>(json, Json)!;
}

/// <summary>
/// The round feedback an expert sees for one target period: an anonymous projection of
/// <see cref="FeedbackView"/> (see <see cref="AnonymousFeedback"/> for what is shown from which group size).
/// </summary>
public sealed record GroupFeedback(string Period, int N, int MinimumGroupSize, bool Withheld, AnonymousFeedback? Stats)
{
    /// <summary>
    /// Feedback frozen before the anonymous projection existed has no <see cref="FeedbackView.Shown"/>:
    /// it is withheld from experts rather than shown in the old, revealing form.
    /// </summary>
    public static GroupFeedback From(FeedbackView v) =>
        v.Shown is { } shown && !v.Withheld
            ? new GroupFeedback(v.Period, v.N, v.MinimumGroupSize, false, shown)
            : new GroupFeedback(v.Period, v.N, v.MinimumGroupSize, true, null);
}

/// <summary>One expert's latest counted answer to a question-period in a round.</summary>
public sealed record CountedAnswer(int MembershipId, int QuestionId, string Period, double? Value, double? P10, double? P50, double? P90, string? Rationale)
{
    /// <summary>The value convergence and stability look at: the point value, or the P50.</summary>
    public double Headline => Value ?? P50 ?? double.NaN;

    public static CountedAnswer From(Estimate e) => new(e.MembershipId, e.QuestionId, e.Period, e.Value, e.P10, e.P50, e.P90, e.Rationale);
}

/// <summary>Computes round feedback through the statistics core, the one place that maps answers to statistics.</summary>
public static class FeedbackCalculator
{
    public static FeedbackSettings SettingsOf(PanelSettings s) => new()
    {
        Rule = s.OutlierRule switch
        {
            OutlierRuleSetting.SymmetricTrim => OutlierRule.SymmetricTrim,
            OutlierRuleSetting.ModifiedZScore => OutlierRule.ModifiedZScore,
            _ => OutlierRule.TukeyFences,
        },
        TrimFraction = s.TrimFraction,
        MinimumGroupSize = Math.Max(3, s.MinimumGroupSize),
    };

    /// <summary>The feedback of one question-period from the answers counted in a round (in any order).</summary>
    public static FeedbackView Compute(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        var view = ComputeStatistics(question, period, answers, settings);
        if (view.Withheld)
        {
            return view;
        }
        var shown = question.Format == ResponseFormat.Range
            ? AnonymousFeedback.ForRange(RangesOf(answers), settings)
            : AnonymousFeedback.ForPoint(PointsOf(answers), settings);
        return view with { Shown = shown };
    }

    private static List<RangeAnswer> RangesOf(IReadOnlyList<CountedAnswer> answers) =>
        answers.Where(a => a.P10.HasValue && a.P50.HasValue && a.P90.HasValue)
            .Select(a => new RangeAnswer(a.P10!.Value, a.P50!.Value, a.P90!.Value)).ToList();

    private static List<double> PointsOf(IReadOnlyList<CountedAnswer> answers) =>
        answers.Where(a => a.Value.HasValue).Select(a => a.Value!.Value).ToList();

    private static FeedbackView ComputeStatistics(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        if (question.Format == ResponseFormat.Range)
        {
            var r = Core.Statistics.RoundFeedback.ForRange(RangesOf(answers), settings);
            return r.Feedback is { } f
                ? new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, false, null,
                    new RangeStatsView(StatsView.From(f.P10), StatsView.From(f.P50), StatsView.From(f.P90), f.AggregatedP10, f.AggregatedP50, f.AggregatedP90))
                : new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, true, null, null);
        }
        var p = Core.Statistics.RoundFeedback.ForPoint(PointsOf(answers), settings);
        return p.Feedback is { } pf
            ? new FeedbackView(question.Id, period, p.N, p.MinimumGroupSize, false, StatsView.From(pf), null)
            : new FeedbackView(question.Id, period, p.N, p.MinimumGroupSize, true, null, null);
    }

    /// <summary>The unattributed rationales of a question's answers: one per expert, in alphabetical order so order reveals nothing.</summary>
    public static IReadOnlyList<string> Rationales(IEnumerable<CountedAnswer> answersToQuestion) =>
        answersToQuestion.Where(a => !string.IsNullOrWhiteSpace(a.Rationale))
            .GroupBy(a => a.MembershipId).Select(g => g.First().Rationale!.Trim())
            .Distinct(StringComparer.Ordinal).Order(StringComparer.Ordinal).ToList();
}
