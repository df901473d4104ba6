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
/// The round feedback of one question-period. <see cref="Headline"/> is the statistic that
/// convergence and the retained range are read from: the answers for Point questions, the P50s
/// for Range questions.
/// </summary>
public sealed record FeedbackView(int QuestionId, string Period, int N, int MinimumGroupSize, bool Withheld, StatsView? Point, RangeStatsView? Range,
    GroupHistogram? Shape = null)
{
    public StatsView? Headline => Point ?? Range?.P50;

    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web);

    public string ToJson() => JsonSerializer.Serialize(this, Json);

    public static FeedbackView FromJson(string json) => JsonSerializer.Deserialize<FeedbackView>(json, Json)!;
}

/// <summary>
/// The histogram experts see: equal-width bins over the retained range only, with the answers
/// the outlier rule excluded counted as below or above it, so no bin edge is an individual's
/// extreme answer. Not made for fewer than <see cref="FeedbackCalculator.MinimumForShape"/> answers.
/// </summary>
public sealed record GroupHistogram(double Lower, double Upper, IReadOnlyList<int> Counts, int Below, int Above);

/// <summary>Group statistics as experts see them: no minimum or maximum, no per-quantile spread of Range answers.</summary>
public sealed record GroupStats(int N, double Median, double Q1, double Q3, double? RelativeIqr, double TrimmedMedian, double TrimmedMean,
    double RetainedMin, double RetainedMax, GroupHistogram? Histogram);

/// <summary>The round feedback an expert sees for one target period (an anonymous projection of <see cref="FeedbackView"/>).</summary>
public sealed record GroupFeedback(string Period, int N, int MinimumGroupSize, bool Withheld, GroupStats? Stats,
    double? AggregatedP10, double? AggregatedP50, double? AggregatedP90)
{
    public static GroupFeedback From(FeedbackView v) =>
        v.Headline is not { } h || v.Withheld
            ? new GroupFeedback(v.Period, v.N, v.MinimumGroupSize, true, null, null, null, null)
            : new GroupFeedback(v.Period, v.N, v.MinimumGroupSize, false,
                new GroupStats(h.N, h.Median, h.Q1, h.Q3, h.RelativeIqr, h.TrimmedMedian, h.TrimmedMean, h.RetainedMin, h.RetainedMax, v.Shape),
                v.Range?.AggregatedP10, v.Range?.AggregatedP50, v.Range?.AggregatedP90);
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

    /// <summary>Experts see a histogram only from this many answers, so that a bin rarely holds one person.</summary>
    public const int MinimumForShape = 5;

    /// <summary>The feedback of one question-period from the answers counted in a round (in any order).</summary>
    public static FeedbackView Compute(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        var view = ComputeStatistics(question, period, answers, settings);
        return view.Headline is { } h && view.N >= MinimumForShape
            ? view with { Shape = Shape(answers.Select(a => a.Headline).Where(double.IsFinite).ToList(), h) }
            : view;
    }

    private static GroupHistogram Shape(IReadOnlyList<double> values, StatsView h)
    {
        var bins = Math.Clamp(h.Histogram.Count, 1, 10);
        var width = (h.RetainedMax - h.RetainedMin) / bins;
        var counts = new int[bins];
        int below = 0, above = 0;
        foreach (var v in values)
        {
            if (v < h.RetainedMin)
            {
                below++;
            }
            else if (v > h.RetainedMax)
            {
                above++;
            }
            else
            {
                counts[width <= 0 ? 0 : Math.Min(bins - 1, (int)((v - h.RetainedMin) / width))]++;
            }
        }
        return new GroupHistogram(h.RetainedMin, h.RetainedMax, counts, below, above);
    }

    private static FeedbackView ComputeStatistics(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        if (question.Format == ResponseFormat.Range)
        {
            var ranges = answers.Where(a => a.P10.HasValue && a.P50.HasValue && a.P90.HasValue)
                .Select(a => new RangeAnswer(a.P10!.Value, a.P50!.Value, a.P90!.Value)).ToList();
            var r = Core.Statistics.RoundFeedback.ForRange(ranges, settings);
            return r.Feedback is { } f
                ? new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, false, null,
                    new RangeStatsView(StatsView.From(f.P10), StatsView.From(f.P50), StatsView.From(f.P90), f.AggregatedP10, f.AggregatedP50, f.AggregatedP90))
                : new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, true, null, null);
        }
        var values = answers.Where(a => a.Value.HasValue).Select(a => a.Value!.Value).ToList();
        var p = Core.Statistics.RoundFeedback.ForPoint(values, settings);
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
