namespace PanelRound.Core.Statistics;

/// <summary>
/// How round feedback decides which answers are outliers, excluded from the trimmed median and
/// the retained range (a panel setting).
/// </summary>
/// <remarks>
/// Every rule retains a contiguous run of the sorted answers, never none.
/// </remarks>
public enum OutlierRule
{
    /// <summary>
    /// Excludes the ⌊α·n⌋ lowest and the ⌊α·n⌋ highest answers, α = <see cref="FeedbackSettings.TrimFraction"/>.
    /// Among tied values at a cut, the earlier input positions rank lower (so the lower cut
    /// takes the earliest tied answers and the upper cut the latest).
    /// </summary>
    SymmetricTrim,

    /// <summary>
    /// Excludes answers strictly outside the fences [Q1 − k·IQR, Q3 + k·IQR], k =
    /// <see cref="FeedbackSettings.TukeyK"/> (1.5 by default); an answer on a fence is retained.
    /// Source: J. W. Tukey, "Exploratory Data Analysis", Addison-Wesley, 1977. Implementation note:
    /// Q1 and Q3 are the panel's quantile definition (<see cref="FeedbackSettings.Method"/>), not
    /// Tukey's hinges, so that the fences agree with the quartiles shown in the same feedback.
    /// </summary>
    TukeyFences,

    /// <summary>
    /// Excludes answers whose modified z-score M = 0.6745·(x − median)/MAD has |M| greater than
    /// <see cref="FeedbackSettings.ModifiedZThreshold"/> (3.5 by default), MAD being the median of
    /// the absolute deviations from the median. Source: B. Iglewicz and D. C. Hoaglin, "How to
    /// Detect and Handle Outliers", ASQC Quality Press, 1993. Implementation note: when MAD is 0
    /// (more than half the answers identical) the score uses 1.253314·MeanAD instead of
    /// MAD/0.6745, MeanAD being the mean absolute deviation from the median (1.253314 ≈ √(π/2)
    /// makes it consistent for the normal standard deviation); when that is 0 too, all answers
    /// are equal and none is excluded.
    /// </summary>
    ModifiedZScore,
}
