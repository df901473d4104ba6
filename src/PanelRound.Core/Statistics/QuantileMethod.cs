namespace PanelRound.Core.Statistics;

/// <summary>
/// The sample quantile definitions offered, numbered as in Hyndman &amp; Fan (1996).
/// </summary>
/// <remarks>
/// For sorted values x(1) ≤ … ≤ x(n) and probability p, each definition computes a real
/// position h and interpolates linearly between x(⌊h⌋) and x(⌊h⌋+1); positions below 1 give
/// x(1) and positions at or above n give x(n).
/// <list type="bullet">
/// <item><description><see cref="HyndmanFan6"/>: h = (n + 1)·p (the Weibull plotting position).</description></item>
/// <item><description><see cref="HyndmanFan7"/>: h = (n − 1)·p + 1 (the default of most statistics packages and spreadsheets).</description></item>
/// <item><description><see cref="HyndmanFan8"/>: h = (n + 1/3)·p + 1/3 (approximately median-unbiased; Hyndman &amp; Fan's recommendation).</description></item>
/// </list>
/// All three give the same median. Source: R. J. Hyndman and Y. Fan, "Sample quantiles in
/// statistical packages", The American Statistician 50(4), 361–365, 1996.
/// </remarks>
public enum QuantileMethod
{
    /// <summary>Hyndman &amp; Fan type 6: h = (n + 1)·p.</summary>
    HyndmanFan6 = 6,

    /// <summary>Hyndman &amp; Fan type 7: h = (n − 1)·p + 1. The default.</summary>
    HyndmanFan7 = 7,

    /// <summary>Hyndman &amp; Fan type 8: h = (n + 1/3)·p + 1/3.</summary>
    HyndmanFan8 = 8,
}
