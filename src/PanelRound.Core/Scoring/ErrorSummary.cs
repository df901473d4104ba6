namespace PanelRound.Core.Scoring;

/// <summary>The mean pinball (quantile) loss at each of the three quantiles of a range answer.</summary>
/// <param name="P10">Mean loss of the P10s, τ = 0.1.</param>
/// <param name="P50">Mean loss of the P50s, τ = 0.5.</param>
/// <param name="P90">Mean loss of the P90s, τ = 0.9.</param>
public sealed record QuantileLosses(double P10, double P50, double P90)
{
    /// <summary>The mean over the three quantiles, (P10 + P50 + P90) / 3.</summary>
    public double Mean => (P10 + P50 + P90) / 3;
}

/// <summary>
/// The error measures of a set of scored forecasts, each with the number of items it rests on.
/// </summary>
/// <remarks>
/// <para>Error e = forecast − outcome (positive = over-forecast); the forecast of a range answer is
/// its P50. A measure is null when none of the items qualifies for it (its n is 0). Definitions,
/// after Hyndman &amp; Koehler (2006), section 3, and Gneiting &amp; Raftery (2007), section 6.2:</para>
/// <list type="bullet">
/// <item><see cref="Mae"/> = mean |e|; <see cref="MeanError"/> = mean e; <see cref="Rmse"/> = √(mean e²); over all <see cref="N"/> items.</item>
/// <item><see cref="Mape"/> = 100·mean |e / y| in percent, over the <see cref="NMape"/> items with a non-zero outcome y.</item>
/// <item><see cref="ScaledMae"/> = mean |e| / s and <see cref="ScaledMeanError"/> = mean e / s, over the <see cref="NScaled"/> items with a valid scale s.</item>
/// <item><see cref="Coverage"/> = share of the <see cref="NRange"/> range items with P10 ≤ y ≤ P90 (both ends inclusive; ideal 0.8).</item>
/// <item><see cref="IntervalScore"/> = mean interval score of [P10, P90] at α = 0.2; <see cref="PinballLoss"/> = mean pinball loss per quantile; over the range items.</item>
/// <item><see cref="ScaledIntervalScore"/> and <see cref="ScaledPinballLoss"/>: the same, each item divided by its scale, over the <see cref="NRangeScaled"/> range items with a valid scale.</item>
/// <item><see cref="NaiveMae"/> = mean |naive − y| over the <see cref="NNaive"/> items with a naive forecast; <see cref="Skill"/> = 1 − MAE / NaiveMae on those same items (null when NaiveMae is 0).</item>
/// <item><see cref="ScaledNaiveMae"/> and <see cref="ScaledSkill"/>: the same with scaled errors, over the <see cref="NScaledNaive"/> items with both a scale and a naive forecast. Across questions in different units use ScaledSkill: the unscaled ratio is dominated by the questions with the largest units.</item>
/// </list>
/// </remarks>
public sealed record ErrorSummary
{
    /// <summary>The number of items.</summary>
    public int N { get; init; }

    /// <summary>Mean absolute error.</summary>
    public double? Mae { get; init; }

    /// <summary>Mean error (bias): positive = over-forecasts.</summary>
    public double? MeanError { get; init; }

    /// <summary>Root mean squared error.</summary>
    public double? Rmse { get; init; }

    /// <summary>The number of items with a non-zero outcome.</summary>
    public int NMape { get; init; }

    /// <summary>Mean absolute percentage error, in percent.</summary>
    public double? Mape { get; init; }

    /// <summary>The number of items with a valid scale.</summary>
    public int NScaled { get; init; }

    /// <summary>Mean absolute scaled error (MASE).</summary>
    public double? ScaledMae { get; init; }

    /// <summary>Mean scaled error: the bias in units of the typical one-period change.</summary>
    public double? ScaledMeanError { get; init; }

    /// <summary>The number of range items.</summary>
    public int NRange { get; init; }

    /// <summary>Share of range items whose outcome lies in [P10, P90], in [0, 1].</summary>
    public double? Coverage { get; init; }

    /// <summary>Mean interval score of [P10, P90] at α = 0.2.</summary>
    public double? IntervalScore { get; init; }

    /// <summary>Mean pinball loss per quantile.</summary>
    public QuantileLosses? PinballLoss { get; init; }

    /// <summary>The number of range items with a valid scale.</summary>
    public int NRangeScaled { get; init; }

    /// <summary>Mean scaled interval score.</summary>
    public double? ScaledIntervalScore { get; init; }

    /// <summary>Mean scaled pinball loss per quantile.</summary>
    public QuantileLosses? ScaledPinballLoss { get; init; }

    /// <summary>The number of items with a naive forecast.</summary>
    public int NNaive { get; init; }

    /// <summary>MAE of the naive (no-change) forecast on the same items.</summary>
    public double? NaiveMae { get; init; }

    /// <summary>Skill against the naive forecast, 1 − MAE / NaiveMae on the items with a naive forecast.</summary>
    public double? Skill { get; init; }

    /// <summary>The number of items with both a valid scale and a naive forecast.</summary>
    public int NScaledNaive { get; init; }

    /// <summary>Scaled MAE of the naive forecast on those items.</summary>
    public double? ScaledNaiveMae { get; init; }

    /// <summary>Skill on scaled errors, 1 − scaled MAE / scaled naive MAE on those items.</summary>
    public double? ScaledSkill { get; init; }
}
