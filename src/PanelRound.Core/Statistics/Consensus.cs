namespace PanelRound.Core.Statistics;

/// <summary>How a consensus value was formed.</summary>
public enum ConsensusMethod
{
    /// <summary>Median of the answers the outlier rule retains; band = their Q1 and Q3.</summary>
    TrimmedMedian,

    /// <summary>Weighted median of the retained answers; band = their weighted Q1 and Q3.</summary>
    WeightedTrimmedMedian,

    /// <summary>Trimmed quantile average of the experts' P10 / P50 / P90.</summary>
    QuantileAverage,

    /// <summary>Weighted trimmed quantile average of the experts' P10 / P50 / P90.</summary>
    WeightedQuantileAverage,

    /// <summary>The calibration-weighted linear pool of the experts' minimum-information distributions, read at 10%, 50% and 90%.</summary>
    CalibrationWeightedPool,

    /// <summary>The calibration-weighted median of point answers; band = the weighted Q1 and Q3.</summary>
    CalibrationWeightedMedian,
}

/// <summary>The panel's published forecast for one question-period, with its uncertainty band.</summary>
/// <param name="Value">The central value.</param>
/// <param name="Low">The low end of the band.</param>
/// <param name="High">The high end of the band.</param>
/// <param name="N">The number of answers it was formed from (before outlier exclusion).</param>
/// <param name="Method">How it was formed.</param>
public sealed record ConsensusValue(double Value, double Low, double High, int N, ConsensusMethod Method);

/// <summary>The consensus value of a question-period, from the answers of its last round.</summary>
/// <remarks>
/// <para>Point answers: the outlier rule of the settings is applied to the values (unweighted).
/// Value = the median of the retained answers (the trimmed median); Low and High = their first
/// and third quartiles (<see cref="FeedbackSettings.Method"/>, Hyndman &amp; Fan 1996), so the band
/// is the middle half of the retained opinion. With weights: the same retained answers, and
/// the weighted median and weighted quartiles of <see cref="Quantiles.WeightedQuantile"/>, which
/// reduce to Hyndman &amp; Fan type 7 under equal weights. Implementation note: if every retained
/// answer has weight 0, the weights carry no information about them and the unweighted trimmed
/// median is returned (Method says so).</para>
/// <para>Range answers: quantile averaging (Vincent 1912; Ratcliff 1979), the trim applied per
/// quantile: Value, Low, High = the trimmed means of the experts' P50s, P10s and P90s, cutting
/// ⌊α·n⌋ per tail (α = <see cref="FeedbackSettings.TrimFraction"/>). With weights: the weighted
/// trimmed mean (1/(1 − 2β))·∫[β, 1 − β] Q(u) du of each quantile's weighted empirical
/// distribution (mass w_i at each expert's value, Q its left-continuous inverse), with
/// β = ⌊α·m⌋/m over the m experts of positive weight; under equal weights it is exactly the
/// trimmed mean. Both forms keep Low ≤ Value ≤ High, since every expert's P10 ≤ P50 ≤ P90.</para>
/// <para>Weights: one per answer, finite, non-negative and not all zero; they are normalised
/// internally, so only ratios matter. The minimum group size does not apply: consensus is a
/// staff-facing figure and the caller decides whether to publish it. At least one answer is
/// required.</para>
/// </remarks>
public static class Consensus
{
    /// <summary>The consensus of point answers: trimmed median (or weighted median) with a Q1–Q3 band.</summary>
    /// <param name="values">The answers, finite, at least one.</param>
    /// <param name="settings">The panel's settings (outlier rule, quantile method).</param>
    /// <param name="weights">Optional track-record weights, one per answer.</param>
    public static ConsensusValue ForPoint(IReadOnlyList<double> values, FeedbackSettings settings, IReadOnlyList<double>? weights = null)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(settings);
        var original = RoundFeedback.AsSpan(values);
        if (original.IsEmpty)
        {
            throw new ArgumentException("At least one answer is required.", nameof(values));
        }

        Preconditions.CheckAllFinite(original, nameof(values));
        if (weights is not null)
        {
            Preconditions.CheckWeights(weights, original.Length);
        }

        var analysis = SampleAnalysis.Create(original, settings);
        var retained = analysis.Retained;
        var unweighted = new ConsensusValue(
            Quantiles.MedianSortedCore(retained),
            Quantiles.QuantileSortedCore(retained, 0.25, settings.Method),
            Quantiles.QuantileSortedCore(retained, 0.75, settings.Method),
            original.Length,
            ConsensusMethod.TrimmedMedian);
        if (weights is null)
        {
            return unweighted;
        }

        var flags = analysis.Flags(original);
        var keptValues = new List<double>(retained.Length);
        var keptWeights = new List<double>(retained.Length);
        var keptMass = 0.0;
        for (var i = 0; i < original.Length; i++)
        {
            if (!flags[i])
            {
                keptValues.Add(original[i]);
                keptWeights.Add(weights[i]);
                keptMass += weights[i];
            }
        }

        if (keptMass <= 0)
        {
            return unweighted;
        }

        var (x, w) = Quantiles.SortedPositiveWeighted(keptValues, keptWeights);
        return new ConsensusValue(
            Quantiles.WeightedQuantileSortedCore(x, w, 0.5),
            Quantiles.WeightedQuantileSortedCore(x, w, 0.25),
            Quantiles.WeightedQuantileSortedCore(x, w, 0.75),
            original.Length,
            ConsensusMethod.WeightedTrimmedMedian);
    }

    /// <summary>The consensus of range answers by trimmed quantile averaging (optionally weighted).</summary>
    /// <param name="answers">The range answers, at least one.</param>
    /// <param name="settings">The panel's settings (trim fraction).</param>
    /// <param name="weights">Optional track-record weights, one per answer.</param>
    public static ConsensusValue ForRange(IReadOnlyList<RangeAnswer> answers, FeedbackSettings settings, IReadOnlyList<double>? weights = null)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(settings);
        if (answers.Count == 0)
        {
            throw new ArgumentException("At least one answer is required.", nameof(answers));
        }

        if (weights is not null)
        {
            Preconditions.CheckWeights(weights, answers.Count);
        }

        var (p10, p50, p90) = RoundFeedback.Split(answers);
        if (weights is null)
        {
            return new ConsensusValue(
                TrimmedMean(p50, settings.TrimFraction),
                TrimmedMean(p10, settings.TrimFraction),
                TrimmedMean(p90, settings.TrimFraction),
                answers.Count,
                ConsensusMethod.QuantileAverage);
        }

        return new ConsensusValue(
            WeightedTrimmedMean(p50, weights, settings.TrimFraction),
            WeightedTrimmedMean(p10, weights, settings.TrimFraction),
            WeightedTrimmedMean(p90, weights, settings.TrimFraction),
            answers.Count,
            ConsensusMethod.WeightedQuantileAverage);
    }

    private static double TrimmedMean(double[] values, double alpha)
    {
        Array.Sort(values);
        return Quantiles.TrimmedMeanSortedCore(values, alpha);
    }

    /// <summary>
    /// (1/(1 − 2β))·∫[β, 1 − β] Q(u) du for the weighted empirical distribution, β = ⌊α·m⌋/m.
    /// </summary>
    internal static double WeightedTrimmedMean(IReadOnlyList<double> values, IReadOnlyList<double> weights, double alpha)
    {
        var (x, w) = Quantiles.SortedPositiveWeighted(values, weights);
        var m = x.Length;
        var beta = (double)Quantiles.TrimCount(m, alpha) / m;
        var from = beta;
        var to = 1 - beta;
        var cumulative = 0.0;
        var integral = 0.0;
        var mass = 0.0;
        for (var i = 0; i < m; i++)
        {
            var start = cumulative;
            cumulative = i == m - 1 ? 1.0 : cumulative + w[i];
            var overlap = Math.Min(cumulative, to) - Math.Max(start, from);
            if (overlap > 0)
            {
                integral += overlap * x[i];
                mass += overlap;
            }
        }

        // Dividing by the overlapped mass rather than 1 - 2β absorbs rounding in the cumulative sums.
        var mean = mass > 0 ? integral / mass : Quantiles.WeightedQuantileSortedCore(x, w, 0.5);
        return Math.Clamp(mean, x[0], x[m - 1]);
    }
}
