using PanelRound.Core.Statistics;

namespace PanelRound.Core.Calibration;

/// <summary>
/// The weighted linear pool of experts' minimum-information distributions on one question, and
/// its 10%, 50% and 90% quantiles (R. M. Cooke, <i>Experts in Uncertainty</i>, 1991, chapter 12).
/// </summary>
/// <remarks>
/// Each expert's distribution function is piecewise linear through (range low, 0), (P10, 0.1),
/// (P50, 0.5), (P90, 0.9), (range high, 1) on the range's scale (the logarithm for a log-uniform
/// background); the pool is Σ w_e F_e / Σ w_e, piecewise linear between the union of the knots,
/// and is inverted exactly on that piece. Equal quantiles are a jump of the distribution
/// function; the quantile at a jump is the jump's place.
/// </remarks>
public static class LinearPool
{
    /// <summary>The pooled P10 / P50 / P90 of the answers with the weights (finite, non-negative, not all zero).</summary>
    public static RangeAnswer Combine(IReadOnlyList<RangeAnswer> answers, IReadOnlyList<double> weights, IntrinsicRange range)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(range);
        Preconditions.CheckNotEmpty(answers);
        Preconditions.CheckWeights(weights, answers.Count);
        var total = weights.Sum();
        var knots = answers.Select(a => ClassicalModel.Knots(a, range)).ToList();
        var xs = knots.SelectMany(k => k).Distinct().Order().ToArray();
        var q = new double[3];
        double[] ps = [0.1, 0.5, 0.9];
        for (var k = 0; k < 3; k++)
        {
            q[k] = range.FromScale(Quantile(ps[k], xs, knots, weights, total));
        }

        // Rounding in exp/log may break the order by an ulp; the quantiles are monotone in exact arithmetic.
        var p10 = q[0];
        var p50 = Math.Max(q[1], p10);
        var p90 = Math.Max(q[2], p50);
        return new RangeAnswer(p10, p50, p90);
    }

    /// <summary>The pooled distribution function at x on the range's scale (right-continuous, or its left limit).</summary>
    public static double Cdf(double x, IReadOnlyList<RangeAnswer> answers, IReadOnlyList<double> weights, IntrinsicRange range)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(range);
        Preconditions.CheckWeights(weights, answers.Count);
        var knots = answers.Select(a => ClassicalModel.Knots(a, range)).ToList();
        return Pooled(x, knots, weights, weights.Sum(), leftLimit: false);
    }

    private static double Quantile(double p, double[] xs, List<double[]> knots, IReadOnlyList<double> weights, double total)
    {
        var previous = xs[0];
        var fPrevious = Pooled(previous, knots, weights, total, leftLimit: false);
        if (fPrevious >= p)
        {
            return previous;
        }

        for (var i = 1; i < xs.Length; i++)
        {
            var x = xs[i];
            var left = Pooled(x, knots, weights, total, leftLimit: true);
            if (left >= p)
            {
                // Linear between previous (value fPrevious) and x (left limit): invert on the piece.
                return left <= fPrevious ? previous : previous + ((p - fPrevious) / (left - fPrevious) * (x - previous));
            }

            var right = Pooled(x, knots, weights, total, leftLimit: false);
            if (right >= p)
            {
                return x;
            }

            (previous, fPrevious) = (x, right);
        }

        return xs[^1];
    }

    private static double Pooled(double x, List<double[]> knots, IReadOnlyList<double> weights, double total, bool leftLimit)
    {
        var sum = 0.0;
        for (var e = 0; e < knots.Count; e++)
        {
            if (weights[e] > 0)
            {
                sum += weights[e] * Single(x, knots[e], leftLimit);
            }
        }

        return sum / total;
    }

    /// <summary>One expert's piecewise-linear distribution function through its knots.</summary>
    private static double Single(double x, double[] y, bool leftLimit)
    {
        var c = ClassicalModel.CumulativeAtKnots;
        if (x < y[0] || (leftLimit && x == y[0]))
        {
            return 0;
        }

        if (x > y[4] || (!leftLimit && x == y[4]))
        {
            return 1;
        }

        // x equals one or more knots: the left limit is the lowest cumulative there, the value the highest.
        var equal = -1;
        for (var j = 0; j < 5; j++)
        {
            if (y[j] == x)
            {
                equal = j;
                if (leftLimit)
                {
                    return c[j];
                }
            }
        }

        if (equal >= 0)
        {
            return c[equal];
        }

        for (var j = 0; j < 4; j++)
        {
            if (y[j] < x && x < y[j + 1])
            {
                return c[j] + ((c[j + 1] - c[j]) * (x - y[j]) / (y[j + 1] - y[j]));
            }
        }

        return 1;
    }
}
