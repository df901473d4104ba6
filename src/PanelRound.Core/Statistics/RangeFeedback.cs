namespace PanelRound.Core.Statistics;

/// <summary>
/// The group statistics of one question-period's range answers (P10 / P50 / P90) in one round.
/// </summary>
/// <remarks>
/// <para><see cref="P10"/>, <see cref="P50"/> and <see cref="P90"/> are the full point feedback over
/// the experts' answers for that quantile.</para>
/// <para>The aggregated quantiles are quantile averages ("Vincentization": S. B. Vincent, 1912;
/// R. Ratcliff, "Group reaction time distributions and an analysis of distribution statistics",
/// Psychological Bulletin 86, 446–461, 1979): the panel's P10 is the average of the experts' P10s,
/// and so on. The trim is applied per quantile: each aggregate is the symmetric trimmed mean of
/// that quantile's answers, cutting ⌊α·n⌋ from each tail, α = <see cref="FeedbackSettings.TrimFraction"/>
/// (so it equals <c>P10.TrimmedMean</c> and so on). Because every expert's P10 ≤ P50 ≤ P90,
/// the order statistics of the three samples are ordered rank by rank, and trimmed means of the
/// same ranks keep AggregatedP10 ≤ AggregatedP50 ≤ AggregatedP90; an outlier rule that excluded
/// different experts per quantile would not guarantee this.</para>
/// </remarks>
public sealed record RangeFeedback
{
    /// <summary>The number of range answers.</summary>
    public required int N { get; init; }

    /// <summary>Feedback over the experts' P10 answers.</summary>
    public required PointFeedback P10 { get; init; }

    /// <summary>Feedback over the experts' P50 answers.</summary>
    public required PointFeedback P50 { get; init; }

    /// <summary>Feedback over the experts' P90 answers.</summary>
    public required PointFeedback P90 { get; init; }

    /// <summary>The trimmed quantile average of the experts' P10s.</summary>
    public required double AggregatedP10 { get; init; }

    /// <summary>The trimmed quantile average of the experts' P50s.</summary>
    public required double AggregatedP50 { get; init; }

    /// <summary>The trimmed quantile average of the experts' P90s.</summary>
    public required double AggregatedP90 { get; init; }
}
