using System.Collections.ObjectModel;
using System.Runtime.InteropServices;

namespace PanelRound.Core.Statistics;

/// <summary>
/// Round feedback for one question-period: the frozen group statistics shown in the next round.
/// </summary>
/// <remarks>
/// Definitions are documented on <see cref="PointFeedback"/>, <see cref="RangeFeedback"/>,
/// <see cref="OutlierRule"/> and <see cref="QuantileMethod"/>. The answers are passed as plain
/// values in any order; the results depend only on the multiset of values, except the outlier
/// flags, which follow the input positions (and, for <see cref="OutlierRule.SymmetricTrim"/> with
/// ties at a cut, rank earlier positions lower). NaN and infinities are programming errors
/// (<see cref="ArgumentException"/>); too few answers is a withheld result.
/// </remarks>
public static class RoundFeedback
{
    /// <summary>Feedback for a question with <c>Point</c> answers.</summary>
    /// <param name="values">One answer per expert, in any order; finite.</param>
    /// <param name="settings">The panel's settings.</param>
    /// <returns>Withheld when there are fewer answers than <see cref="FeedbackSettings.MinimumGroupSize"/>.</returns>
    public static FeedbackResult<PointFeedback> ForPoint(IReadOnlyList<double> values, FeedbackSettings settings)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(settings);
        var original = AsSpan(values);
        Preconditions.CheckAllWithinMagnitude(original, nameof(values));
        if (original.Length < settings.MinimumGroupSize)
        {
            return FeedbackResult<PointFeedback>.Withheld(original.Length, settings.MinimumGroupSize);
        }

        return FeedbackResult<PointFeedback>.Shown(original.Length, settings.MinimumGroupSize, Compute(original, settings));
    }

    /// <summary>Feedback for a question with <c>Range</c> answers (P10 / P50 / P90).</summary>
    /// <param name="answers">One range answer per expert, in any order (valid by construction).</param>
    /// <param name="settings">The panel's settings.</param>
    /// <returns>Withheld when there are fewer answers than <see cref="FeedbackSettings.MinimumGroupSize"/>.</returns>
    /// <remarks>The aggregated quantiles are defined on <see cref="RangeFeedback"/> (trimmed quantile averaging).</remarks>
    public static FeedbackResult<RangeFeedback> ForRange(IReadOnlyList<RangeAnswer> answers, FeedbackSettings settings)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(settings);
        var n = answers.Count;
        if (n < settings.MinimumGroupSize)
        {
            return FeedbackResult<RangeFeedback>.Withheld(n, settings.MinimumGroupSize);
        }

        var (p10, p50, p90) = Split(answers);
        Preconditions.CheckAllWithinMagnitude(p10, nameof(answers));
        Preconditions.CheckAllWithinMagnitude(p90, nameof(answers));
        var f10 = Compute(p10, settings);
        var f50 = Compute(p50, settings);
        var f90 = Compute(p90, settings);
        var feedback = new RangeFeedback
        {
            N = n,
            P10 = f10,
            P50 = f50,
            P90 = f90,
            AggregatedP10 = f10.TrimmedMean,
            AggregatedP50 = f50.TrimmedMean,
            AggregatedP90 = f90.TrimmedMean,
        };
        return FeedbackResult<RangeFeedback>.Shown(n, settings.MinimumGroupSize, feedback);
    }

    internal static (double[] P10, double[] P50, double[] P90) Split(IReadOnlyList<RangeAnswer> answers)
    {
        var n = answers.Count;
        var p10 = new double[n];
        var p50 = new double[n];
        var p90 = new double[n];
        for (var i = 0; i < n; i++)
        {
            var a = answers[i] ?? throw new ArgumentException($"Answer {i} is null.", nameof(answers));
            p10[i] = a.P10;
            p50[i] = a.P50;
            p90[i] = a.P90;
        }

        return (p10, p50, p90);
    }

    internal static ReadOnlySpan<double> AsSpan(IReadOnlyList<double> values) => values switch
    {
        double[] array => array,
        List<double> list => CollectionsMarshal.AsSpan(list),
        _ => CopyList(values),
    };

    private static double[] CopyList(IReadOnlyList<double> values)
    {
        var copy = new double[values.Count];
        for (var i = 0; i < copy.Length; i++)
        {
            copy[i] = values[i];
        }

        return copy;
    }

    /// <summary>Point feedback for finite, non-empty values (checked by the caller).</summary>
    internal static PointFeedback Compute(ReadOnlySpan<double> original, FeedbackSettings settings)
    {
        var analysis = SampleAnalysis.Create(original, settings);
        var sorted = analysis.Sorted;
        var n = sorted.Length;
        var retained = analysis.Retained;
        var iqr = analysis.Q3 - analysis.Q1;
        var median = analysis.Median;
        var flags = analysis.Flags(original);

        return new PointFeedback
        {
            N = n,
            Min = sorted[0],
            Max = sorted[n - 1],
            Median = median,
            Q1 = analysis.Q1,
            Q3 = analysis.Q3,
            Iqr = iqr,
            RelativeIqr = median == 0 ? null : iqr / Math.Abs(median),
            TrimmedMean = Quantiles.TrimmedMeanSortedCore(sorted, settings.TrimFraction),
            TrimmedMedian = Quantiles.MedianSortedCore(retained),
            RetainedMin = retained[0],
            RetainedMax = retained[^1],
            ExcludedCount = n - retained.Length,
            Rule = settings.Rule,
            IsOutlier = new ReadOnlyCollection<bool>(flags),
            Histogram = Histogram(sorted, iqr, settings.MaxHistogramBins),
        };
    }

    /// <summary>The histogram of <see cref="PointFeedback"/> (Freedman–Diaconis, Sturges fallback, capped).</summary>
    internal static ReadOnlyCollection<HistogramBin> Histogram(ReadOnlySpan<double> sorted, double iqr, int maxBins)
    {
        var n = sorted.Length;
        var min = sorted[0];
        var max = sorted[n - 1];
        var range = max - min;
        if (range == 0)
        {
            return new ReadOnlyCollection<HistogramBin>([new HistogramBin(min, max, n)]);
        }

        double wanted;
        if (iqr > 0)
        {
            var width = 2 * iqr / Math.Cbrt(n);
            wanted = Math.Ceiling(range / width);
        }
        else
        {
            wanted = Math.Ceiling(Math.Log2(n)) + 1;
        }

        var k = (int)Math.Clamp(wanted, 1, maxBins);
        var bins = new HistogramBin[k];
        var lower = min;
        var index = 0;
        for (var b = 0; b < k; b++)
        {
            var upper = b == k - 1 ? max : min + (range * (b + 1) / k);
            var count = 0;
            if (b == k - 1)
            {
                count = n - index;
                index = n;
            }
            else
            {
                while (index < n && sorted[index] < upper)
                {
                    index++;
                    count++;
                }
            }

            bins[b] = new HistogramBin(lower, upper, count);
            lower = upper;
        }

        return new ReadOnlyCollection<HistogramBin>(bins);
    }
}
