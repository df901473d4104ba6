using PanelRound.Core.Statistics;

namespace PanelRound.Core.Calibration;

/// <summary>The background measure of a calibration question's information score.</summary>
public enum BackgroundMeasure
{
    /// <summary>Uniform on the intrinsic range.</summary>
    Uniform = 0,

    /// <summary>Uniform on the logarithm of the values: for quantities that span orders of magnitude; needs every value positive.</summary>
    LogUniform = 1,
}

/// <summary>One question with a known true value (a calibration question).</summary>
/// <param name="Key">A key unique among the questions scored together.</param>
/// <param name="Truth">The true value, finite.</param>
/// <param name="Background">The background measure of its information score.</param>
public sealed record CalibrationItem(string Key, double Truth, BackgroundMeasure Background = BackgroundMeasure.Uniform);

/// <summary>One expert's P10 / P50 / P90 for one question.</summary>
/// <param name="ExpertKey">The expert (a panel code, say).</param>
/// <param name="ItemKey">The question's key.</param>
/// <param name="Answer">The expert's quantiles.</param>
public sealed record CalibrationAssessment(string ExpertKey, string ItemKey, RangeAnswer Answer);

/// <summary>The settings of the classical model's scores and weights.</summary>
/// <param name="Overshoot">The share of the spread of all quantiles and the truth added on each side of the intrinsic range (default 10%).</param>
/// <param name="Cutoff">The calibration cut-off α: experts below it get weight 0; null chooses α to maximise the combined score of the weighted combination (the optimised variant).</param>
public sealed record CalibrationSettings(double Overshoot = 0.10, double? Cutoff = null)
{
    /// <summary>10% overshoot, optimised α.</summary>
    public static CalibrationSettings Default { get; } = new();
}

/// <summary>The range an item's information is measured on, after the overshoot, on the scale of its background.</summary>
/// <param name="Low">The low end (a logarithm when <paramref name="Background"/> is log-uniform).</param>
/// <param name="High">The high end, above <paramref name="Low"/>.</param>
/// <param name="Background">The background actually used: log-uniform falls back to uniform when a value is not positive.</param>
public sealed record IntrinsicRange(double Low, double High, BackgroundMeasure Background)
{
    /// <summary>A value on the range's scale (its logarithm for a log-uniform background).</summary>
    public double ToScale(double x) => Background == BackgroundMeasure.LogUniform ? Math.Log(x) : x;

    /// <summary>A value of the range's scale back in the question's unit.</summary>
    public double FromScale(double y) => Background == BackgroundMeasure.LogUniform ? Math.Exp(y) : y;
}

/// <summary>An expert's (or a combination's) score over the calibration questions.</summary>
/// <param name="Key">The expert's key, or the combination's name.</param>
/// <param name="N">The number of calibration questions answered.</param>
/// <param name="Hits">How many truths fell in each of the four bins: below P10, P10 to P50, P50 to P90, above P90.</param>
/// <param name="Statistic">2·N·I(s, p), chi-square with 3 degrees of freedom under the hypothesis that the expert is well calibrated.</param>
/// <param name="Calibration">1 − F(statistic): the calibration score, in [0, 1].</param>
/// <param name="Information">The mean relative information against the background, at least 0.</param>
public sealed record PerformanceScore(string Key, int N, IReadOnlyList<int> Hits, double Statistic, double Calibration, double Information)
{
    /// <summary>Calibration × information (the combined score).</summary>
    public double Combined => Calibration * Information;
}

/// <summary>An expert's scores and weight.</summary>
/// <param name="Score">Calibration and information.</param>
/// <param name="Weight">The normalised weight (sum 1 over the experts), 0 below the cut-off.</param>
public sealed record ExpertPerformance(PerformanceScore Score, double Weight);

/// <summary>The classical model's result on a set of calibration questions.</summary>
/// <param name="Experts">Each expert who answered at least one question, ordered by key.</param>
/// <param name="Cutoff">The α used.</param>
/// <param name="Optimised">True when α was chosen to maximise the combined score of the weighted combination.</param>
/// <param name="Weighted">The performance-weighted combination scored on the same questions; null when no expert has positive weight.</param>
/// <param name="Equal">The equal-weight combination scored on the same questions.</param>
/// <param name="Ranges">The intrinsic range of each question, by key.</param>
public sealed record ClassicalModelResult(
    IReadOnlyList<ExpertPerformance> Experts, double Cutoff, bool Optimised, PerformanceScore? Weighted, PerformanceScore Equal,
    IReadOnlyDictionary<string, IntrinsicRange> Ranges)
{
    /// <summary>The weights by expert key; null when no expert has positive weight.</summary>
    public IReadOnlyDictionary<string, double>? Weights =>
        Weighted is null ? null : Experts.ToDictionary(e => e.Score.Key, e => e.Weight, StringComparer.Ordinal);
}
