namespace PanelRound.Core.Statistics;

/// <summary>
/// The round feedback an expert may see for one question-period: statistics of the group that
/// are never one identifiable person's answer and that cannot be inverted into the others' answers.
/// </summary>
/// <param name="N">The number of answers.</param>
/// <param name="Median">The median of all answers (for Range questions, of the P50s).</param>
/// <param name="Spread">Quartiles, histogram and band; null below <see cref="AnonymousFeedback.MinimumForSpread"/> answers.</param>
/// <remarks>
/// <para>What is left out, and why. No minimum, maximum or extreme of the retained answers: an
/// extreme is one person's answer, and the same person holding it across periods links an answer
/// profile. No mean of any kind: with the median and quartiles, a mean of a small group lets the
/// holder of an extreme solve for the other extreme exactly. No trimmed median: the outlier rule's
/// fences follow from the shown quartiles, so an expert can tell which answers it excluded, and the
/// median of the rest is one more equation (at n = 6 the holder of the top answer could solve four
/// of the five others from it, the median and the quartiles). For Range questions the band is the
/// median of the P10s and of the P90s, not their average, for the same reason.</para>
/// <para>Group sizes. Nothing is shown below the panel's minimum group size (never below 3). From
/// that size up to <see cref="MinimumForSpread"/> − 1 answers only the median is shown. The
/// quartiles, the relative IQR and the histogram appear from <see cref="MinimumForSpread"/> = 8
/// answers. Every shown quantile is an order statistic or an interpolation between two adjacent
/// ones (Hyndman &amp; Fan type 7); an expert whose own answer is one of an interpolated pair can
/// solve for the other, so some central answer is always learnable from a median. Below 8 answers
/// the quartiles interpolate pairs that overlap the median's (n = 5: Q1, median and Q3 are the 2nd,
/// 3rd and 4th answers; n = 6: the holder of the 3rd answer solves the 4th from the median, then the
/// 5th and 2nd from the quartiles); from 8 answers the three quantiles use disjoint pairs, so from
/// its own answer an expert solves at most one other, never the lowest or the highest (the outer
/// bins are open-ended). Residual risk, stated plainly: when answers are round numbers, an
/// interpolated quartile (e.g. 0.25·x2 + 0.75·x3) can have a single whole-number solution and so
/// reveal its pair of answers, though not whose they are. The integration test
/// FeedbackAnonymityTests searches exhaustively over whole-number answers through the expert API and
/// requires that the set is never rebuilt, the extremes never determined, and fewer than half of the
/// other answers determined beyond the shown numbers.</para>
/// <para>The histogram (<see cref="AnonymousHistogram"/>) has edges derived only from shown
/// statistics (the Tukey fences Q1 − 1.5·IQR and Q3 + 1.5·IQR and equal-width bins between them;
/// J. W. Tukey, Exploratory Data Analysis, 1977), open-ended outer bins, and adjacent bins merged
/// until every bin is empty or holds at least three answers (so a bin shared by the expert's own
/// answer always holds at least two others).</para>
/// <para>Quantiles follow <see cref="FeedbackSettings.Method"/> (Hyndman &amp; Fan type 7 by default).</para>
/// </remarks>
public sealed record AnonymousFeedback(int N, double Median, AnonymousSpread? Spread)
{
    /// <summary>The smallest group for which spread statistics and the histogram are shown (see remarks).</summary>
    public const int MinimumForSpread = 8;

    /// <summary>The expert-facing feedback of Point answers, or null when fewer than the minimum group size answered.</summary>
    /// <param name="values">One answer per expert, in any order; finite, within ±<see cref="Domain.Numbers.MaxMagnitude"/>.</param>
    /// <param name="settings">The panel's settings.</param>
    public static AnonymousFeedback? ForPoint(IReadOnlyList<double> values, FeedbackSettings settings)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(settings);
        var span = RoundFeedback.AsSpan(values);
        Preconditions.CheckAllWithinMagnitude(span, nameof(values));
        return Compute(span, settings, null, null);
    }

    /// <summary>The expert-facing feedback of Range answers (statistics of the P50s; band from the P10s and P90s).</summary>
    /// <param name="answers">One range answer per expert, in any order.</param>
    /// <param name="settings">The panel's settings.</param>
    public static AnonymousFeedback? ForRange(IReadOnlyList<RangeAnswer> answers, FeedbackSettings settings)
    {
        ArgumentNullException.ThrowIfNull(answers);
        ArgumentNullException.ThrowIfNull(settings);
        var (p10, p50, p90) = RoundFeedback.Split(answers);
        Preconditions.CheckAllWithinMagnitude(p10, nameof(answers));
        Preconditions.CheckAllWithinMagnitude(p90, nameof(answers));
        return Compute(p50, settings, p10, p90);
    }

    private static AnonymousFeedback? Compute(ReadOnlySpan<double> values, FeedbackSettings settings, double[]? p10, double[]? p90)
    {
        var n = values.Length;
        if (n < settings.MinimumGroupSize)
        {
            return null;
        }

        var analysis = SampleAnalysis.Create(values, settings);
        if (n < MinimumForSpread)
        {
            return new AnonymousFeedback(n, analysis.Median, null);
        }

        var iqr = analysis.Q3 - analysis.Q1;
        var spread = new AnonymousSpread(
            analysis.Q1,
            analysis.Q3,
            analysis.Median == 0 ? null : iqr / Math.Abs(analysis.Median),
            AnonymousHistogram.Build(analysis.Sorted, analysis.Q1, analysis.Q3),
            p10 is null ? null : Quantiles.Median(p10),
            p90 is null ? null : Quantiles.Median(p90));
        return new AnonymousFeedback(n, analysis.Median, spread);
    }
}

/// <summary>The spread statistics of <see cref="AnonymousFeedback"/>, shown from <see cref="AnonymousFeedback.MinimumForSpread"/> answers.</summary>
/// <param name="Q1">The first quartile.</param>
/// <param name="Q3">The third quartile.</param>
/// <param name="RelativeIqr">(Q3 − Q1) / |median|; null when the median is 0.</param>
/// <param name="Histogram">The anonymous histogram.</param>
/// <param name="BandP10">For Range questions, the median of the experts' P10s; else null.</param>
/// <param name="BandP90">For Range questions, the median of the experts' P90s; else null.</param>
public sealed record AnonymousSpread(double Q1, double Q3, double? RelativeIqr, AnonymousHistogram Histogram, double? BandP10, double? BandP90);

/// <summary>
/// A histogram whose bin edges are functions of the shown quartiles only and whose bins never
/// hold fewer than <see cref="MinimumBinCount"/> answers unless empty. Bin i holds the answers x with Edges[i−1] ≤ x &lt; Edges[i], where the
/// first bin is open below (x &lt; Edges[0]) and the last open above (x ≥ Edges[^1]); so there is
/// one more count than edges.
/// </summary>
/// <param name="Edges">The inner edges, ascending; empty when all answers share one bin.</param>
/// <param name="Counts">The counts, Edges.Count + 1 of them; each 0 or at least <see cref="MinimumBinCount"/>.</param>
public sealed record AnonymousHistogram(IReadOnlyList<double> Edges, IReadOnlyList<int> Counts)
{
    /// <summary>The fewest answers a non-empty bin holds, so that a bin never narrows down one other answer.</summary>
    public const int MinimumBinCount = 3;

    /// <summary>The most inner bins between the fences before merging.</summary>
    public const int MaxInnerBins = 10;

    internal static AnonymousHistogram Build(double[] sorted, double q1, double q3)
    {
        var n = sorted.Length;
        var iqr = q3 - q1;
        if (iqr <= 0)
        {
            return new AnonymousHistogram([], [n]);
        }

        // Freedman–Diaconis width 2·IQR·n^(−1/3) over the 4·IQR between the fences.
        var inner = (int)Math.Clamp(Math.Ceiling(2 * Math.Cbrt(n)), 2, MaxInnerBins);
        var lower = q1 - (1.5 * iqr);
        var upper = q3 + (1.5 * iqr);
        var edges = new List<double>(inner + 1);
        for (var i = 0; i <= inner; i++)
        {
            edges.Add(i == inner ? upper : lower + ((upper - lower) * i / inner));
        }

        var counts = new List<int>(new int[edges.Count + 1]);
        var bin = 0;
        foreach (var x in sorted)
        {
            while (bin < edges.Count && x >= edges[bin])
            {
                bin++;
            }

            counts[bin]++;
        }

        // Merge a bin holding one or two answers into its neighbour (the next one, or the previous
        // for the last bin) by removing the edge between them, until every bin is empty or holds at
        // least three: an expert whose own answer shares a bin with just one other would otherwise
        // learn that one answer's interval.
        for (var i = 0; i < counts.Count;)
        {
            if (counts[i] is 0 or >= MinimumBinCount || counts.Count == 1)
            {
                i++;
                continue;
            }

            var j = i < counts.Count - 1 ? i + 1 : i - 1;
            var (left, right) = (Math.Min(i, j), Math.Max(i, j));
            counts[left] += counts[right];
            counts.RemoveAt(right);
            edges.RemoveAt(left);
            i = Math.Max(0, left - 1);
        }

        return new AnonymousHistogram(edges, counts);
    }
}
