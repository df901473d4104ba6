namespace PanelRound.Core.Statistics;

/// <summary>
/// The panel settings that shape round feedback and consensus. Immutable; every property is
/// validated when set, so an instance is always usable.
/// </summary>
/// <remarks>
/// Defaults: Tukey fences with k = 1.5, 10% trim per tail for the trimmed mean, modified
/// z-score threshold 3.5, feedback withheld below 3 answers, at most 20 histogram bins and
/// Hyndman &amp; Fan type 7 quantiles.
/// </remarks>
public sealed record FeedbackSettings
{
    /// <summary>The settings with every default.</summary>
    public static FeedbackSettings Default { get; } = new();

    /// <summary>The outlier rule behind the trimmed median and the retained range. Default: <see cref="OutlierRule.TukeyFences"/>.</summary>
    public OutlierRule Rule
    {
        get;
        init => field = Enum.IsDefined(value) ? value : throw new ArgumentOutOfRangeException(nameof(Rule), value, "Unknown outlier rule.");
    } = OutlierRule.TukeyFences;

    /// <summary>
    /// The trim fraction α per tail, in [0, 0.5): used by the trimmed mean, by the
    /// <see cref="OutlierRule.SymmetricTrim"/> rule and by quantile averaging. Default 0.10.
    /// </summary>
    public double TrimFraction
    {
        get;
        init => field = Preconditions.CheckInHalfOpenRange(value, 0, 0.5, nameof(TrimFraction));
    } = 0.10;

    /// <summary>The Tukey fence multiplier k, in [0, 100]. Default 1.5 (Tukey 1977).</summary>
    public double TukeyK
    {
        get;
        init => field = Preconditions.CheckInRange(value, 0, 100, nameof(TukeyK));
    } = 1.5;

    /// <summary>
    /// The modified z-score above which an answer is an outlier, in [1, 100]. Default 3.5
    /// (Iglewicz &amp; Hoaglin 1993). Values below 1 are refused because they could exclude the
    /// median answers themselves.
    /// </summary>
    public double ModifiedZThreshold
    {
        get;
        init => field = Preconditions.CheckInRange(value, 1, 100, nameof(ModifiedZThreshold));
    } = 3.5;

    /// <summary>
    /// The smallest number of answers for which feedback is shown; fewer are withheld. Never
    /// below 3, so no expert can read another's answer off the feedback. Default 3.
    /// </summary>
    public int MinimumGroupSize
    {
        get;
        init => field = Preconditions.CheckInRange(value, 3, int.MaxValue, nameof(MinimumGroupSize));
    } = 3;

    /// <summary>The cap on the number of histogram bins, in [1, 1000]. Default 20.</summary>
    public int MaxHistogramBins
    {
        get;
        init => field = Preconditions.CheckInRange(value, 1, 1000, nameof(MaxHistogramBins));
    } = 20;

    /// <summary>The quantile definition for quartiles and fences. Default <see cref="QuantileMethod.HyndmanFan7"/>.</summary>
    public QuantileMethod Method
    {
        get;
        init
        {
            Quantiles.CheckMethod(value);
            field = value;
        }
    } = QuantileMethod.HyndmanFan7;
}
