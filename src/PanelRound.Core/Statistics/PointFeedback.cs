namespace PanelRound.Core.Statistics;

/// <summary>
/// The group statistics of one question-period's answers in one round.
/// </summary>
/// <remarks>
/// <para>Conventions. Quantiles (<see cref="Q1"/>, <see cref="Median"/>, <see cref="Q3"/>) follow
/// <see cref="FeedbackSettings.Method"/> (Hyndman &amp; Fan 1996, type 7 by default); the median is the
/// same under all offered types. <see cref="TrimmedMean"/> cuts ⌊α·n⌋ answers from each tail,
/// α = <see cref="FeedbackSettings.TrimFraction"/>, whatever the outlier rule.
/// <see cref="TrimmedMedian"/>, <see cref="RetainedMin"/>, <see cref="RetainedMax"/> and
/// <see cref="ExcludedCount"/> follow the outlier rule (<see cref="FeedbackSettings.Rule"/>).</para>
/// <para><see cref="IsOutlier"/> is indexed by input position, never by expert: the caller decides
/// what anyone may see.</para>
/// <para>The histogram covers all answers, outliers included, in equal-width bins from the
/// minimum to the maximum. The bin count is Freedman–Diaconis: ⌈range / (2·IQR·n^(−1/3))⌉
/// (D. Freedman and P. Diaconis, "On the histogram as a density estimator: L2 theory", Z.
/// Wahrscheinlichkeitstheorie verw. Gebiete 57, 453–476, 1981), capped at
/// <see cref="FeedbackSettings.MaxHistogramBins"/>. When the IQR is 0 but the answers differ,
/// Sturges' rule ⌈log2 n⌉ + 1 is used instead (H. A. Sturges, JASA 21, 65–66, 1926), with the same
/// cap; when all answers are equal there is one bin of zero width holding them all.</para>
/// </remarks>
public sealed record PointFeedback
{
    /// <summary>The number of answers.</summary>
    public required int N { get; init; }

    /// <summary>The smallest answer.</summary>
    public required double Min { get; init; }

    /// <summary>The largest answer.</summary>
    public required double Max { get; init; }

    /// <summary>The median of all answers.</summary>
    public required double Median { get; init; }

    /// <summary>The first quartile (p = 0.25).</summary>
    public required double Q1 { get; init; }

    /// <summary>The third quartile (p = 0.75).</summary>
    public required double Q3 { get; init; }

    /// <summary>The interquartile range Q3 − Q1.</summary>
    public required double Iqr { get; init; }

    /// <summary>IQR / |median|; null when the median is 0.</summary>
    public required double? RelativeIqr { get; init; }

    /// <summary>The symmetric trimmed mean (⌊α·n⌋ cut from each tail).</summary>
    public required double TrimmedMean { get; init; }

    /// <summary>The median of the answers the outlier rule retains.</summary>
    public required double TrimmedMedian { get; init; }

    /// <summary>The smallest retained answer.</summary>
    public required double RetainedMin { get; init; }

    /// <summary>The largest retained answer.</summary>
    public required double RetainedMax { get; init; }

    /// <summary>The number of answers the outlier rule excludes.</summary>
    public required int ExcludedCount { get; init; }

    /// <summary>The outlier rule applied.</summary>
    public required OutlierRule Rule { get; init; }

    /// <summary>Outlier flags by input position: element i belongs to the i-th answer passed in.</summary>
    public required IReadOnlyList<bool> IsOutlier { get; init; }

    /// <summary>The histogram bins, in ascending order.</summary>
    public required IReadOnlyList<HistogramBin> Histogram { get; init; }
}
