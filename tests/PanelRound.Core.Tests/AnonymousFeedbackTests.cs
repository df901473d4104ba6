using FsCheck;
using FsCheck.Xunit;
using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

/// <summary>What experts may see: no extremes, no means, no trimmed median, spread only from eight answers, no bin holding one answer.</summary>
public class AnonymousFeedbackTests
{
    private static readonly FeedbackSettings Settings = new() { Rule = OutlierRule.TukeyFences, MinimumGroupSize = 3 };

    [Fact]
    public void ForPoint_BelowMinimumGroupSize_Withheld()
    {
        Assert.Null(AnonymousFeedback.ForPoint([1, 2], Settings));
    }

    [Theory]
    [InlineData(3)]
    [InlineData(4)]
    [InlineData(5)]
    [InlineData(7)]
    public void ForPoint_FewerThanEightAnswers_MedianOnly(int n)
    {
        var values = Enumerable.Range(1, n).Select(i => (double)i * 10).ToArray();
        var f = AnonymousFeedback.ForPoint(values, Settings)!;
        Assert.Null(f.Spread);
        Assert.Equal(Quantiles.Median(values), f.Median);
    }

    /// <summary>
    /// Hand-worked (Hyndman &amp; Fan type 7, h = (n − 1)p + 1): 10, 20, 30, 40, 50, 60, 70, 200 give
    /// Q1 = 20 + 0.75·10 = 27.5, median 45, Q3 = 60 + 0.25·10 = 62.5, IQR 35, fences −25 and 115.
    /// </summary>
    [Fact]
    public void ForPoint_EightAnswers_SpreadFromQuartilesAndNoSingletonBin()
    {
        var f = AnonymousFeedback.ForPoint([200, 10, 40, 30, 20, 70, 60, 50], Settings)!;
        var s = f.Spread!;
        Assert.Equal(45, f.Median);
        Assert.Equal(27.5, s.Q1);
        Assert.Equal(62.5, s.Q3);
        Assert.Equal(35.0 / 45, s.RelativeIqr!.Value, 12);
        // ⌈2·∛8⌉ = 4 inner bins of width 35 between the fences: edges -25, 10, 45, 80, 115. Counts
        // below -25: 0, [-25, 10): 0, [10, 45): 4, [45, 80): 3, [80, 115): 0, from 115: 1 (the 200).
        // A bin of one (or two) answers is merged into its neighbour, then that bin (still 1) into the next:
        // edges -25, 10, 45 with counts 0, 0, 4, 4. Every edge is a function of Q1 and Q3 alone.
        Assert.Equal([-25.0, 10, 45], s.Histogram.Edges);
        Assert.Equal([0, 0, 4, 4], s.Histogram.Counts);
    }

    /// <summary>P10s 0,1,1,1,2,2,3,4 (median 1.5), P50s 2,3,4,4,5,6,7,8 (median 4.5), P90s 3,5,6,7,8,9,10,12 (median 7.5).</summary>
    [Fact]
    public void ForRange_Band_IsTheMedianOfTheQuantiles()
    {
        var answers = new[]
        {
            new RangeAnswer(1, 2, 3), new RangeAnswer(2, 4, 9), new RangeAnswer(0, 5, 6), new RangeAnswer(3, 6, 8),
            new RangeAnswer(1, 7, 12), new RangeAnswer(2, 3, 7), new RangeAnswer(4, 8, 10), new RangeAnswer(1, 4, 5),
        };
        var f = AnonymousFeedback.ForRange(answers, Settings)!;
        Assert.Equal(4.5, f.Median);
        Assert.Equal(1.5, f.Spread!.BandP10);
        Assert.Equal(7.5, f.Spread.BandP90);
    }

    [Fact]
    public void ForPoint_BeyondTheMagnitudeLimit_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => AnonymousFeedback.ForPoint([1, 2, 3, 4, 5, 6, 7, 1.7e308], Settings));
        Assert.Throws<ArgumentOutOfRangeException>(() => RoundFeedback.ForPoint([1, 2, 3, 4, 1.7e308], Settings));
    }

    /// <summary>Property: for any group of at least 8 answers, every bin is empty or holds at least three answers, counts add up, and every edge is a point of the grid between the fences, so a function of the shown quartiles only.</summary>
    [Property(MaxTest = 300)]
    public bool Histogram_AnyGroup_NoSingletonBinAndNoExtremeShown(NonEmptyArray<int> xs)
    {
        var values = xs.Get.Concat([3, -7, 11, 0, 5, 9, -2, 4]).Select(x => x / 4.0).ToArray();
        var f = AnonymousFeedback.ForPoint(values, Settings)!;
        var s = f.Spread!;
        var iqr = s.Q3 - s.Q1;
        var k = (int)Math.Clamp(Math.Ceiling(2 * Math.Cbrt(values.Length)), 2, AnonymousHistogram.MaxInnerBins);
        var (lower, upper) = (s.Q1 - (1.5 * iqr), s.Q3 + (1.5 * iqr));
        var grid = Enumerable.Range(0, k + 1).Select(i => i == k ? upper : lower + ((upper - lower) * i / k)).ToList();
        return s.Histogram.Counts.All(c => c == 0 || c >= AnonymousHistogram.MinimumBinCount)
            && s.Histogram.Counts.Sum() == values.Length
            && s.Histogram.Counts.Count == s.Histogram.Edges.Count + 1
            && s.Histogram.Edges.All(e => grid.Contains(e))
            && (iqr > 0 || s.Histogram.Edges.Count == 0);
    }
}
