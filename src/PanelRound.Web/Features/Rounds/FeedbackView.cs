using System.Text.Json;
using PanelRound.Core.Statistics;

namespace PanelRound.Web.Features.Rounds;

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
