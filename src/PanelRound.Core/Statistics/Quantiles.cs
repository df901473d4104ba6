using System.Runtime.InteropServices;

namespace PanelRound.Core.Statistics;

/// <summary>
/// Sample quantiles, median, interquartile range, trimmed mean and weighted quantiles.
/// </summary>
/// <remarks>
/// Inputs must be finite: NaN and infinities are rejected with an <see cref="ArgumentException"/>,
/// as are empty inputs and probabilities outside [0, 1]. Unsorted inputs are copied and sorted;
/// the caller's list is never modified. Ties need no special treatment: every definition here
/// works on order statistics.
/// </remarks>
public static class Quantiles
{
    /// <summary>
    /// The sample quantile of <paramref name="values"/> (any order) at probability <paramref name="p"/>.
    /// </summary>
    /// <param name="values">The sample; at least one finite value.</param>
    /// <param name="p">The probability, in [0, 1].</param>
    /// <param name="method">The Hyndman &amp; Fan definition; type 7 by default.</param>
    /// <remarks>
    /// Definition and source: see <see cref="QuantileMethod"/> (Hyndman &amp; Fan 1996).
    /// p = 0 gives the minimum and p = 1 the maximum for every method.
    /// </remarks>
    public static double Quantile(IReadOnlyList<double> values, double p, QuantileMethod method = QuantileMethod.HyndmanFan7)
    {
        CheckProbability(p);
        CheckMethod(method);
        var sorted = SortedCopy(values);
        return QuantileSortedCore(sorted, p, method);
    }

    /// <summary>
    /// The sample quantile of values already sorted in ascending order: no copy and no sort.
    /// </summary>
    /// <param name="sorted">Finite values in ascending order (checked in one pass).</param>
    /// <param name="p">The probability, in [0, 1].</param>
    /// <param name="method">The Hyndman &amp; Fan definition; type 7 by default.</param>
    /// <remarks>Definition and source: see <see cref="QuantileMethod"/> (Hyndman &amp; Fan 1996).</remarks>
    /// <exception cref="ArgumentException">The span is empty, unsorted or holds a non-finite value.</exception>
    public static double QuantileSorted(ReadOnlySpan<double> sorted, double p, QuantileMethod method = QuantileMethod.HyndmanFan7)
    {
        CheckProbability(p);
        CheckMethod(method);
        CheckSorted(sorted);
        return QuantileSortedCore(sorted, p, method);
    }

    /// <summary>The sample median of <paramref name="values"/> (any order).</summary>
    /// <remarks>
    /// The middle order statistic for odd n, the mean of the two middle ones for even n. This is
    /// the p = 0.5 quantile of Hyndman &amp; Fan types 6, 7 and 8 alike (Hyndman &amp; Fan 1996).
    /// </remarks>
    public static double Median(IReadOnlyList<double> values) => MedianSortedCore(SortedCopy(values));

    /// <summary>
    /// The interquartile range Q3 − Q1 of <paramref name="values"/> (any order), with the
    /// quartiles of the chosen definition (Hyndman &amp; Fan 1996, type 7 by default).
    /// </summary>
    public static double InterquartileRange(IReadOnlyList<double> values, QuantileMethod method = QuantileMethod.HyndmanFan7)
    {
        CheckMethod(method);
        var sorted = SortedCopy(values);
        return QuantileSortedCore(sorted, 0.75, method) - QuantileSortedCore(sorted, 0.25, method);
    }

    /// <summary>
    /// The symmetric trimmed mean: the mean of the values left after cutting ⌊α·n⌋ values from
    /// each tail of the sorted sample.
    /// </summary>
    /// <param name="values">The sample; at least one finite value.</param>
    /// <param name="alpha">The trim fraction per tail, in [0, 0.5).</param>
    /// <remarks>
    /// The definition of SciPy's <c>scipy.stats.trim_mean</c> and of Tukey's trimmed mean
    /// (Tukey 1962; see also Wilcox, "Introduction to Robust Estimation and Hypothesis
    /// Testing"). Because α &lt; 0.5, at least one value is always retained. α = 0 gives the mean.
    /// Implementation note: ⌊α·n⌋ is taken with a relative tolerance of 1e-9, so that binary
    /// rounding (0.29 × 100 = 28.999…) does not cut one value fewer than the decimal product says.
    /// The result is clamped to the retained range, which rounding in the sum could otherwise
    /// leave by one unit in the last place.
    /// </remarks>
    public static double TrimmedMean(IReadOnlyList<double> values, double alpha)
    {
        Preconditions.CheckInHalfOpenRange(alpha, 0, 0.5);
        var sorted = SortedCopy(values);
        return TrimmedMeanSortedCore(sorted, alpha);
    }

    /// <summary>
    /// The weighted sample quantile at probability <paramref name="p"/>; it equals the
    /// Hyndman &amp; Fan type 7 quantile when all weights are equal.
    /// </summary>
    /// <param name="values">The sample (any order); finite values.</param>
    /// <param name="weights">One weight per value: finite, non-negative, not all zero. Only ratios matter.</param>
    /// <param name="p">The probability, in [0, 1].</param>
    /// <remarks>
    /// <para>Definition. Values with weight zero are left out. The others are sorted, x(1) ≤ … ≤ x(m),
    /// with weights normalised to sum to 1, w(1), …, w(m), and cumulative sums S(k) = w(1) + … + w(k).
    /// Each x(k) is placed at the midpoint of its weight mass, S(k) − w(k)/2, and the positions are
    /// rescaled so that the first value sits at 0 and the last at 1:
    /// u(k) = (S(k) − w(k)/2 − w(1)/2) / (1 − w(1)/2 − w(m)/2).
    /// The quantile is the linear interpolation of the points (u(k), x(k)) at p. A single
    /// positive-weight value is returned for every p. Tied values first share their total weight
    /// equally (a tie group of t values with total weight W counts as t values of weight W/t), so
    /// the result does not depend on the order of tied answers.</para>
    /// <para>Under equal weights w = 1/m this gives u(k) = (k − 1)/(m − 1), the plotting position of
    /// Hyndman &amp; Fan (1996) type 7, so the two quantiles coincide (a property test checks it).
    /// The definition is symmetric: reversing the sign of the data maps the p quantile to minus
    /// the 1 − p quantile, as for the unweighted types. Tied values with different weights simply
    /// interpolate between equal values.</para>
    /// </remarks>
    public static double WeightedQuantile(IReadOnlyList<double> values, IReadOnlyList<double> weights, double p)
    {
        Preconditions.CheckAllFinite(values);
        Preconditions.CheckNotEmpty(values);
        Preconditions.CheckWeights(weights, values.Count);
        CheckProbability(p);
        var (x, w) = SortedPositiveWeighted(values, weights);
        return WeightedQuantileSortedCore(x, w, p);
    }

    /// <summary>
    /// The weighted median: <see cref="WeightedQuantile"/> at p = 0.5. Equals <see cref="Median"/>
    /// under equal weights.
    /// </summary>
    /// <remarks>Definition: see <see cref="WeightedQuantile"/>.</remarks>
    public static double WeightedMedian(IReadOnlyList<double> values, IReadOnlyList<double> weights)
        => WeightedQuantile(values, weights, 0.5);

    internal static void CheckProbability(double p) => Preconditions.CheckInRange(p, 0.0, 1.0, nameof(p));

    internal static void CheckMethod(QuantileMethod method)
    {
        if (method is not (QuantileMethod.HyndmanFan6 or QuantileMethod.HyndmanFan7 or QuantileMethod.HyndmanFan8))
        {
            throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown quantile method.");
        }
    }

    private static void CheckSorted(ReadOnlySpan<double> sorted)
    {
        if (sorted.IsEmpty)
        {
            throw new ArgumentException("At least one value is required.", nameof(sorted));
        }

        Preconditions.CheckAllFinite(sorted, nameof(sorted));
        for (var i = 1; i < sorted.Length; i++)
        {
            if (sorted[i] < sorted[i - 1])
            {
                throw new ArgumentException($"The values must be in ascending order; element {i} is smaller than element {i - 1}.", nameof(sorted));
            }
        }
    }

    /// <summary>Copies the values into a new array, rejecting empty input and non-finite values.</summary>
    internal static double[] ValidatedCopy(IReadOnlyList<double> values, string paramName = "values")
    {
        ArgumentNullException.ThrowIfNull(values, paramName);
        if (values.Count == 0)
        {
            throw new ArgumentException("At least one value is required.", paramName);
        }

        double[] copy;
        if (values is double[] array)
        {
            copy = (double[])array.Clone();
        }
        else if (values is List<double> list)
        {
            copy = CollectionsMarshal.AsSpan(list).ToArray();
        }
        else
        {
            copy = new double[values.Count];
            for (var i = 0; i < copy.Length; i++)
            {
                copy[i] = values[i];
            }
        }

        Preconditions.CheckAllFinite(copy, paramName);
        return copy;
    }

    internal static double[] SortedCopy(IReadOnlyList<double> values)
    {
        var copy = ValidatedCopy(values);
        Array.Sort(copy);
        return copy;
    }

    /// <summary>Hyndman &amp; Fan quantile on a sorted, non-empty, finite span; arguments not checked.</summary>
    internal static double QuantileSortedCore(ReadOnlySpan<double> sorted, double p, QuantileMethod method)
    {
        var n = sorted.Length;

        // h is the 1-based real position of Hyndman & Fan (1996), Table/section 2.
        var h = method switch
        {
            QuantileMethod.HyndmanFan6 => (n + 1) * p,
            QuantileMethod.HyndmanFan8 => ((n + (1.0 / 3.0)) * p) + (1.0 / 3.0),
            _ => ((n - 1) * p) + 1,
        };

        var j = Math.Floor(h);
        if (j < 1)
        {
            return sorted[0];
        }

        if (j >= n)
        {
            return sorted[n - 1];
        }

        var lower = sorted[(int)j - 1];
        var upper = sorted[(int)j];
        var g = h - j;
        if (g == 0 || lower == upper)
        {
            return lower;
        }

        // Implementation note: clamped so that rounding never leaves [lower, upper].
        var q = lower + (g * (upper - lower));
        return q < lower ? lower : q > upper ? upper : q;
    }

    internal static double MedianSortedCore(ReadOnlySpan<double> sorted)
    {
        var n = sorted.Length;
        var mid = n / 2;
        if ((n & 1) == 1)
        {
            return sorted[mid];
        }

        var a = sorted[mid - 1];
        var b = sorted[mid];
        if (a == b)
        {
            return a;
        }

        var m = a + ((b - a) * 0.5);
        return m < a ? a : m > b ? b : m;
    }

    internal static int TrimCount(int n, double alpha)
    {
        var product = alpha * n;
        var k = (int)Math.Floor(product + (1e-9 * Math.Max(1.0, product)));

        // Never cut into the last retained value, whatever the tolerance did.
        return Math.Min(k, (n - 1) / 2);
    }

    internal static double TrimmedMeanSortedCore(ReadOnlySpan<double> sorted, double alpha)
    {
        var k = TrimCount(sorted.Length, alpha);
        var kept = sorted[k..(sorted.Length - k)];
        return MeanClamped(kept);
    }

    /// <summary>The mean of a sorted, non-empty span, clamped to [first, last].</summary>
    internal static double MeanClamped(ReadOnlySpan<double> sortedKept)
    {
        var lo = sortedKept[0];
        var hi = sortedKept[^1];
        if (lo == hi)
        {
            return lo;
        }

        // Implementation note: the values are shifted by the first one before summing, which keeps
        // the sum small when the spread is small compared with the level (e.g. prices near 5,000).
        var sum = 0.0;
        for (var i = 0; i < sortedKept.Length; i++)
        {
            sum += sortedKept[i] - lo;
        }

        var mean = lo + (sum / sortedKept.Length);
        return mean < lo ? lo : mean > hi ? hi : mean;
    }

    /// <summary>Drops zero weights, sorts by value and normalises the weights to sum to 1.</summary>
    internal static (double[] Values, double[] Weights) SortedPositiveWeighted(IReadOnlyList<double> values, IReadOnlyList<double> weights)
    {
        var m = 0;
        var total = 0.0;
        for (var i = 0; i < weights.Count; i++)
        {
            if (weights[i] > 0)
            {
                m++;
                total += weights[i];
            }
        }

        var x = new double[m];
        var w = new double[m];
        var j = 0;
        for (var i = 0; i < values.Count; i++)
        {
            if (weights[i] > 0)
            {
                x[j] = values[i];
                w[j] = weights[i] / total;
                j++;
            }
        }

        Array.Sort(x, w);

        // Tied values share their total weight equally, so that the result does not depend on the
        // order in which tied values arrive (the sort is not stable) and stays symmetric.
        for (var start = 0; start < m;)
        {
            var end = start + 1;
            var groupWeight = w[start];
            while (end < m && x[end] == x[start])
            {
                groupWeight += w[end];
                end++;
            }

            if (end - start > 1)
            {
                var share = groupWeight / (end - start);
                for (var i = start; i < end; i++)
                {
                    w[i] = share;
                }
            }

            start = end;
        }

        return (x, w);
    }

    /// <summary>
    /// The weighted quantile of <see cref="WeightedQuantile"/> on values sorted ascending with
    /// positive weights summing to 1; arguments not checked.
    /// </summary>
    internal static double WeightedQuantileSortedCore(ReadOnlySpan<double> x, ReadOnlySpan<double> w, double p)
    {
        var m = x.Length;
        if (m == 1)
        {
            return x[0];
        }

        var denominator = 1 - (w[0] / 2) - (w[m - 1] / 2);
        var offset = w[0] / 2;

        // Walk the positions u(k) = (S(k) - w(k)/2 - w(1)/2) / denominator until u(k) >= p.
        var cumulative = w[0];
        var previousU = 0.0;
        for (var k = 1; k < m; k++)
        {
            cumulative += w[k];
            var u = k == m - 1 ? 1.0 : (cumulative - (w[k] / 2) - offset) / denominator;
            if (u >= p)
            {
                var lower = x[k - 1];
                var upper = x[k];
                if (lower == upper || u <= previousU)
                {
                    return upper;
                }

                var g = (p - previousU) / (u - previousU);
                var q = lower + (g * (upper - lower));
                return q < lower ? lower : q > upper ? upper : q;
            }

            previousU = u;
        }

        return x[m - 1];
    }
}
