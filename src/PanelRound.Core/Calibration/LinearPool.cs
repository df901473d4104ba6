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
/// Implementation note: the sums run over the answers in a canonical order (by their quantiles), so the result does
/// not depend on the order of the answers; a pooled probability within 10⁻¹² of the level at a knot counts as
/// reaching it there, so a quantile that lies on a knot in exact arithmetic is that knot, returned as the answer's
/// own value (the pool of one answer is that answer, bit for bit).
/// </remarks>
public static class LinearPool
{
    /// <summary>
    /// How far a pooled probability at a knot may lie from the quantile's level and still count as reaching it: the
    /// weighted sum rounds in its last bits, and a quantile that sits on a knot in exact arithmetic must be that knot.
    /// </summary>
    private const double KnotTolerance = 1e-12;

    /// <summary>The pooled P10 / P50 / P90 of the answers with the weights (finite, non-negative, not all zero).</summary>
    public static RangeAnswer Combine(IReadOnlyList<RangeAnswer> answers, IReadOnlyList<double> weights, IntrinsicRange range)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(range);
        Preconditions.CheckNotEmpty(answers);
        Preconditions.CheckWeights(weights, answers.Count);
        var pool = Prepare(answers, weights, range);
        var xs = pool.Knots.SelectMany(k => k).Distinct().Order().ToArray();

        // A quantile on a knot is returned as the answer's own value: exp(ln x) may differ from x in the last bit,
        // and a truth equal to an expert's quantile must fall in the same bin for the pool as for the expert.
        // Values taken in ascending order, so that two values with one logarithm map to the same one whatever the order.
        var original = new Dictionary<double, double>();
        foreach (var v in answers.SelectMany(a => new[] { a.P10, a.P50, a.P90 }).Order())
        {
            var y = range.ToScale(v);
            if (y >= range.Low && y <= range.High)
            {
                original.TryAdd(y, v);
            }
        }

        var q = new double[3];
        double[] ps = [0.1, 0.5, 0.9];
        for (var k = 0; k < 3; k++)
        {
            var y = Quantile(ps[k], xs, pool);
            q[k] = original.TryGetValue(y, out var v) ? v : range.FromScale(y);
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
        return Pooled(x, Prepare(answers, weights, range), leftLimit: false);
    }

    /// <summary>
    /// The experts' knots and weight shares in a canonical order (by the answer's quantiles, then the weight), so that
    /// the pooled sums, and so the pooled quantiles, do not depend on the order the answers come in.
    /// </summary>
    private static Pool Prepare(IReadOnlyList<RangeAnswer> answers, IReadOnlyList<double> weights, IntrinsicRange range)
    {
        var order = Enumerable.Range(0, answers.Count)
            .Where(e => weights[e] > 0)
            .OrderBy(e => answers[e].P10).ThenBy(e => answers[e].P50).ThenBy(e => answers[e].P90).ThenBy(e => weights[e])
            .ToArray();
        var total = 0.0;
        foreach (var e in order)
        {
            total += weights[e];
        }

        return new Pool([.. order.Select(e => ClassicalModel.Knots(answers[e], range))], [.. order.Select(e => weights[e] / total)]);
    }

    private static double Quantile(double p, double[] xs, Pool pool)
    {
        var previous = xs[0];
        var fPrevious = Pooled(previous, pool, leftLimit: false);
        if (fPrevious >= p - KnotTolerance)
        {
            return previous;
        }

        for (var i = 1; i < xs.Length; i++)
        {
            var x = xs[i];
            var left = Pooled(x, pool, leftLimit: true);
            if (left > p + KnotTolerance)
            {
                // Linear between previous (value fPrevious < p) and x (left limit > p): invert on the piece.
                return previous + ((p - fPrevious) / (left - fPrevious) * (x - previous));
            }

            if (left >= p - KnotTolerance)
            {
                return x;
            }

            var right = Pooled(x, pool, leftLimit: false);
            if (right >= p - KnotTolerance)
            {
                return x;
            }

            (previous, fPrevious) = (x, right);
        }

        return xs[^1];
    }

    private static double Pooled(double x, Pool pool, bool leftLimit)
    {
        var sum = 0.0;
        for (var e = 0; e < pool.Knots.Length; e++)
        {
            sum += pool.Shares[e] * Single(x, pool.Knots[e], leftLimit);
        }

        return sum;
    }

    private sealed record Pool(double[][] Knots, double[] Shares);

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
