using FsCheck;
using FsCheck.Xunit;
using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

/// <summary>What experts may see: no extremes, no means, spread only from five answers, no bin holding one answer.</summary>
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
    public void ForPoint_ThreeOrFourAnswers_MedianOnly(int n)
    {
        var values = Enumerable.Range(1, n).Select(i => (double)i * 10).ToArray();
        var f = AnonymousFeedback.ForPoint(values, Settings)!;
        Assert.Null(f.Spread);
        Assert.Equal(Quantiles.Median(values), f.Median);
    }

    /// <summary>Hand-worked: 10, 20, 30, 40, 100 (type 7: Q1 = 20, Q3 = 40, IQR 20, fences −10 and 70).</summary>
    [Fact]
    public void ForPoint_FiveAnswers_SpreadFromQuartilesAndNoSingletonBin()
    {
        var f = AnonymousFeedback.ForPoint([100, 10, 40, 30, 20], Settings)!;
        var s = f.Spread!;
        Assert.Equal(30, f.Median);
        Assert.Equal(20, s.Q1);
        Assert.Equal(40, s.Q3);
        Assert.Equal(20.0 / 30, s.RelativeIqr!.Value, 12);
        // Tukey fences at 1.5 x IQR exclude 100; the trimmed median is the median of 10..40.
        Assert.Equal(25, s.TrimmedMedian);
        // Four inner bins of width 20 between the fences: edges -10, 10, 30, 50, 70. Counts below
        // -10: 0, [-10, 10): 0, [10, 30): 2, [30, 50): 2, [50, 70): 0, from 70: 1 (the 100). The
        // single answer is merged into its neighbour, then that bin (still 1) into the next: edges
        // -10, 10, 30 with counts 0, 0, 2, 3. Every edge is a function of Q1 and Q3 alone.
        Assert.Equal([-10.0, 10, 30], s.Histogram.Edges);
        Assert.Equal([0, 0, 2, 3], s.Histogram.Counts);
    }

    [Fact]
    public void ForRange_Band_IsTheMedianOfTheQuantiles()
    {
        var answers = new[] { new RangeAnswer(1, 2, 3), new RangeAnswer(2, 4, 9), new RangeAnswer(0, 5, 6), new RangeAnswer(3, 6, 8), new RangeAnswer(1, 7, 12) };
        var f = AnonymousFeedback.ForRange(answers, Settings)!;
        Assert.Equal(5, f.Median);
        Assert.Equal(1, f.Spread!.BandP10);
        Assert.Equal(8, f.Spread.BandP90);
    }

    [Fact]
    public void ForPoint_BeyondTheMagnitudeLimit_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => AnonymousFeedback.ForPoint([1, 2, 3, 4, 1.7e308], Settings));
        Assert.Throws<ArgumentOutOfRangeException>(() => RoundFeedback.ForPoint([1, 2, 3, 4, 1.7e308], Settings));
    }

    /// <summary>Property: for any group of at least 5 answers, no bin holds exactly one answer, counts add up, and every edge is a point of the grid between the fences, so a function of the shown quartiles only.</summary>
    [Property(MaxTest = 300)]
    public bool Histogram_AnyGroup_NoSingletonBinAndNoExtremeShown(NonEmptyArray<int> xs)
    {
        var values = xs.Get.Concat([3, -7, 11, 0, 5]).Select(x => x / 4.0).ToArray();
        var f = AnonymousFeedback.ForPoint(values, Settings)!;
        var s = f.Spread!;
        var iqr = s.Q3 - s.Q1;
        var k = (int)Math.Clamp(Math.Ceiling(2 * Math.Cbrt(values.Length)), 2, AnonymousHistogram.MaxInnerBins);
        var (lower, upper) = (s.Q1 - (1.5 * iqr), s.Q3 + (1.5 * iqr));
        var grid = Enumerable.Range(0, k + 1).Select(i => i == k ? upper : lower + ((upper - lower) * i / k)).ToList();
        return s.Histogram.Counts.All(c => c != 1)
            && s.Histogram.Counts.Sum() == values.Length
            && s.Histogram.Counts.Count == s.Histogram.Edges.Count + 1
            && s.Histogram.Edges.All(e => grid.Contains(e))
            && (iqr > 0 || s.Histogram.Edges.Count == 0);
    }
}
