using PanelRound.Core.Statistics;

namespace PanelRound.Core.Calibration;

/// <summary>
/// The consensus of a question-period with calibration-question weights (R. M. Cooke,
/// <i>Experts in Uncertainty</i>, 1991, chapter 12): for Range answers the weighted linear pool
/// of the experts' minimum-information distributions, its P10 / P50 / P90 read from the pooled
/// distribution; for Point answers the weighted median with the weighted quartiles as the band.
/// </summary>
/// <remarks>
/// The pool's intrinsic range comes from the answers alone (the outcome is not known) with the
/// panel's overshoot. Weights are one per answer, finite, non-negative and not all zero; no
/// outlier rule applies (the weights do that work). Quantiles of the weighted median:
/// <see cref="Quantiles.WeightedQuantile"/>.
/// </remarks>
public static class CalibrationConsensus
{
    /// <summary>The weighted linear pool of range answers.</summary>
    public static ConsensusValue ForRange(IReadOnlyList<RangeAnswer> answers, IReadOnlyList<double> weights, double overshoot, BackgroundMeasure background)
    {
        ArgumentNullException.ThrowIfNull(answers);
        Preconditions.CheckNotEmpty(answers);
        var range = ClassicalModel.RangeOf(answers.SelectMany(a => new[] { a.P10, a.P50, a.P90 }), overshoot, background);
        var pooled = LinearPool.Combine(answers, weights, range);
        return new ConsensusValue(pooled.P50, pooled.P10, pooled.P90, answers.Count, ConsensusMethod.CalibrationWeightedPool);
    }

    /// <summary>The weighted median of point answers, with the weighted quartiles.</summary>
    public static ConsensusValue ForPoint(IReadOnlyList<double> values, IReadOnlyList<double> weights) =>
        new(Quantiles.WeightedQuantile(values, weights, 0.5), Quantiles.WeightedQuantile(values, weights, 0.25),
            Quantiles.WeightedQuantile(values, weights, 0.75), values.Count, ConsensusMethod.CalibrationWeightedMedian);
}
