using System.Diagnostics.CodeAnalysis;

namespace PanelRound.Core.Scoring;

/// <summary>Why an error scale could not be formed.</summary>
public enum ScaleProblem
{
    /// <summary>The scale is available.</summary>
    None,

    /// <summary>The reference series is empty.</summary>
    NoReferenceSeries,

    /// <summary>The reference series has a single value, so there is no one-step change to average.</summary>
    TooFewPoints,

    /// <summary>The reference series never changes, so the naive MAE is zero and cannot divide.</summary>
    NoChange,
}

/// <summary>An error scale, or the reason there is none.</summary>
/// <param name="Value">The scale, or NaN when unavailable (so it can be passed to <see cref="ScoredItem.Scale"/> as is).</param>
/// <param name="Problem">Why it is unavailable; <see cref="ScaleProblem.None"/> when available.</param>
/// <param name="N">The length of the reference series it was computed from.</param>
public sealed record ScaleResult(double Value, ScaleProblem Problem, int N)
{
    /// <summary>True when the scale is available (finite and positive).</summary>
    public bool IsAvailable => Problem == ScaleProblem.None;

    /// <summary>A short English explanation when unavailable; null otherwise.</summary>
    public string? Reason => Problem switch
    {
        ScaleProblem.NoReferenceSeries => "There is no reference series before the panel's start.",
        ScaleProblem.TooFewPoints => "The reference series has a single value; at least two are needed.",
        ScaleProblem.NoChange => "The reference series never changes, so the naive error is zero.",
        _ => null,
    };

    /// <summary>The scale when available.</summary>
    public bool TryGetValue([NotNullWhen(true)] out double? value)
    {
        value = IsAvailable ? Value : null;
        return IsAvailable;
    }
}

/// <summary>
/// The error scale of scaled errors and the no-change forecast, both from a question's reference series.
/// </summary>
/// <remarks>
/// The reference series is the indicator's observations before the panel's start, in time
/// order (oldest first), all finite; the caller selects and orders them.
/// </remarks>
public static class NaiveScale
{
    /// <summary>
    /// The in-sample MAE of the one-step naive forecast: (1/(n − 1))·Σ_{t=2..n} |y_t − y_{t−1}|.
    /// </summary>
    /// <param name="referenceSeries">The reference series, oldest first, finite values.</param>
    /// <remarks>
    /// This is the denominator of the mean absolute scaled error of Hyndman &amp; Koehler (2006),
    /// section 3.4, "Scaled errors": q_t = e_t / ((1/(n − 1))·Σ_{i=2..n} |Y_i − Y_{i−1}|). It needs
    /// n ≥ 2 and a non-zero result; otherwise the result says why (<see cref="ScaleProblem"/>)
    /// and its value is NaN. Non-finite values are a programming error and throw.
    /// </remarks>
    public static ScaleResult InSampleNaiveMae(IReadOnlyList<double> referenceSeries)
    {
        Preconditions.CheckAllFinite(referenceSeries);
        var n = referenceSeries.Count;
        if (n == 0)
        {
            return new ScaleResult(double.NaN, ScaleProblem.NoReferenceSeries, 0);
        }

        if (n == 1)
        {
            return new ScaleResult(double.NaN, ScaleProblem.TooFewPoints, 1);
        }

        var sum = 0.0;
        for (var t = 1; t < n; t++)
        {
            sum += Math.Abs(referenceSeries[t] - referenceSeries[t - 1]);
        }

        var mae = sum / (n - 1);
        return mae > 0 && double.IsFinite(mae)
            ? new ScaleResult(mae, ScaleProblem.None, n)
            : new ScaleResult(double.NaN, ScaleProblem.NoChange, n);
    }

    /// <summary>The no-change (naive) forecast: the last value of the reference series, or null when it is empty.</summary>
    /// <param name="referenceSeries">The reference series, oldest first, finite values.</param>
    /// <remarks>The random-walk forecast of every future period is the last observation (Hyndman &amp; Koehler 2006, section 3.4).</remarks>
    public static double? LastValue(IReadOnlyList<double> referenceSeries)
    {
        Preconditions.CheckAllFinite(referenceSeries);
        return referenceSeries.Count == 0 ? null : referenceSeries[^1];
    }
}
