namespace PanelRound.Core.Statistics;

/// <summary>
/// One sorted copy of a question-period's answers and everything derived from it: quartiles,
/// the outlier rule's retained run of the sorted answers, and the outlier predicate.
/// </summary>
/// <remarks>
/// Implementation note: everything after the single sort is linear or constant time (the MAD
/// comes from a merge of the two sorted halves, not from a second sort), so feedback costs little
/// more than sorting its input.
/// </remarks>
internal sealed class SampleAnalysis
{
    // Iglewicz & Hoaglin (1993): M = 0.6745 (x - median) / MAD.
    private const double ModifiedZConstant = 0.6745;

    // sqrt(pi / 2): scales the mean absolute deviation to the normal standard deviation.
    private const double MeanAbsoluteDeviationConstant = 1.253314;

    private readonly FeedbackSettings settings;

    // The retained interval for the fence rules, or the modified-z cutoff on |x - median|.
    private readonly double lowerFence;
    private readonly double upperFence;
    private readonly double deviationCutoff;

    private SampleAnalysis(double[] sorted, FeedbackSettings settings)
    {
        this.settings = settings;
        Sorted = sorted;
        var n = sorted.Length;
        Median = Quantiles.MedianSortedCore(sorted);
        Q1 = Quantiles.QuantileSortedCore(sorted, 0.25, settings.Method);
        Q3 = Quantiles.QuantileSortedCore(sorted, 0.75, settings.Method);

        int start;
        int end;
        switch (settings.Rule)
        {
            case OutlierRule.SymmetricTrim:
                var k = Quantiles.TrimCount(n, settings.TrimFraction);
                start = k;
                end = n - k;
                break;
            case OutlierRule.TukeyFences:
                var iqr = Q3 - Q1;
                lowerFence = Q1 - (settings.TukeyK * iqr);
                upperFence = Q3 + (settings.TukeyK * iqr);
                (start, end) = RetainedRun(sorted);
                break;
            default:
                var mad = MedianAbsoluteDeviation(sorted, Median);
                deviationCutoff = mad > 0
                    ? settings.ModifiedZThreshold * mad / ModifiedZConstant
                    : settings.ModifiedZThreshold * MeanAbsoluteDeviationConstant * MeanAbsoluteDeviation(sorted, Median);
                (start, end) = RetainedRun(sorted);
                break;
        }

        RetainedStart = start;
        RetainedEnd = end;
    }

    public double[] Sorted { get; }

    public double Median { get; }

    public double Q1 { get; }

    public double Q3 { get; }

    /// <summary>The retained answers are Sorted[RetainedStart..RetainedEnd).</summary>
    public int RetainedStart { get; }

    public int RetainedEnd { get; }

    public ReadOnlySpan<double> Retained => Sorted.AsSpan(RetainedStart, RetainedEnd - RetainedStart);

    /// <summary>Sorts a copy of <paramref name="values"/> (finite, non-empty; checked by the caller) and analyses it.</summary>
    public static SampleAnalysis Create(ReadOnlySpan<double> values, FeedbackSettings settings)
    {
        var sorted = values.ToArray();
        Array.Sort(sorted);
        return new SampleAnalysis(sorted, settings);
    }

    /// <summary>Outlier flags by input position, consistent with the retained run.</summary>
    public bool[] Flags(ReadOnlySpan<double> original)
    {
        var flags = new bool[original.Length];
        if (RetainedEnd - RetainedStart == original.Length)
        {
            return flags;
        }

        if (settings.Rule == OutlierRule.SymmetricTrim)
        {
            FlagTrimmed(original, flags);
            return flags;
        }

        for (var i = 0; i < original.Length; i++)
        {
            flags[i] = IsOutlierByValue(original[i]);
        }

        return flags;
    }

    private bool IsOutlierByValue(double x) => settings.Rule == OutlierRule.TukeyFences
        ? x < lowerFence || x > upperFence
        : Math.Abs(x - Median) > deviationCutoff;

    private (int Start, int End) RetainedRun(double[] sorted)
    {
        // The predicate is monotone on each side of the median, so the retained answers are a
        // contiguous run of the sorted array; outliers are few, so scan inwards from both ends.
        var start = 0;
        var end = sorted.Length;
        while (start < end && IsOutlierByValue(sorted[start]))
        {
            start++;
        }

        while (end > start && IsOutlierByValue(sorted[end - 1]))
        {
            end--;
        }

        return (start, end);
    }

    private void FlagTrimmed(ReadOnlySpan<double> original, bool[] flags)
    {
        var n = Sorted.Length;
        var k = RetainedStart;
        var lowCut = Sorted[k - 1];
        var highCut = Sorted[n - k];
        var countBelow = LowerBound(Sorted, lowCut);
        var countAbove = n - UpperBound(Sorted, highCut);
        var tiedHigh = UpperBound(Sorted, highCut) - LowerBound(Sorted, highCut);
        var lowTiesToFlag = k - countBelow;
        var highTiesToFlag = k - countAbove;

        // Ties at a cut are ranked by input position: earlier positions rank lower.
        var seenLow = 0;
        var seenHigh = 0;
        for (var i = 0; i < original.Length; i++)
        {
            var x = original[i];
            if (x < lowCut || x > highCut)
            {
                flags[i] = true;
                continue;
            }

            var flagged = false;
            if (x == lowCut)
            {
                flagged |= seenLow < lowTiesToFlag;
                seenLow++;
            }

            if (x == highCut)
            {
                flagged |= seenHigh >= tiedHigh - highTiesToFlag;
                seenHigh++;
            }

            flags[i] = flagged;
        }
    }

    private static int LowerBound(ReadOnlySpan<double> sorted, double value)
    {
        int lo = 0, hi = sorted.Length;
        while (lo < hi)
        {
            var mid = (lo + hi) >>> 1;
            if (sorted[mid] < value)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }

    private static int UpperBound(ReadOnlySpan<double> sorted, double value)
    {
        int lo = 0, hi = sorted.Length;
        while (lo < hi)
        {
            var mid = (lo + hi) >>> 1;
            if (sorted[mid] <= value)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }

    /// <summary>
    /// The median of |x − median| from the sorted sample in linear time, by merging the
    /// deviations of the lower half (read downwards) with those of the upper half (read upwards).
    /// </summary>
    internal static double MedianAbsoluteDeviation(ReadOnlySpan<double> sorted, double median)
    {
        var n = sorted.Length;
        var left = LowerBound(sorted, median) - 1;
        var right = left + 1;
        var targetHigh = n / 2;
        var targetLow = (n & 1) == 1 ? targetHigh : targetHigh - 1;
        var low = 0.0;
        for (var rank = 0; rank <= targetHigh; rank++)
        {
            double next;
            if (left < 0)
            {
                next = sorted[right++] - median;
            }
            else if (right >= n)
            {
                next = median - sorted[left--];
            }
            else
            {
                var dl = median - sorted[left];
                var dr = sorted[right] - median;
                if (dl <= dr)
                {
                    next = dl;
                    left--;
                }
                else
                {
                    next = dr;
                    right++;
                }
            }

            if (rank == targetLow)
            {
                low = next;
            }

            if (rank == targetHigh)
            {
                return rank == targetLow || low == next ? next : low + ((next - low) * 0.5);
            }
        }

        return low;
    }

    private static double MeanAbsoluteDeviation(ReadOnlySpan<double> sorted, double median)
    {
        var sum = 0.0;
        foreach (var x in sorted)
        {
            sum += Math.Abs(x - median);
        }

        return sum / sorted.Length;
    }
}
