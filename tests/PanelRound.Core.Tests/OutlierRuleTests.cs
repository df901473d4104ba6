using PanelRound.Core.Statistics;
using MathNetStatistics = MathNet.Numerics.Statistics.Statistics;

namespace PanelRound.Core.Tests;

public class OutlierRuleTests
{
    private static PointFeedback Feedback(double[] values, FeedbackSettings settings)
        => RoundFeedback.ForPoint(values, settings).GetFeedbackOrThrow();

    // Tukey (1977) fences with k = 1.5 and HF7 quartiles, by hand: sorted 2, 4, 4, 5, 6, 7, 30;
    // Q1: h = 6·0.25 + 1 = 2.5 → 4; Q3: h = 5.5 → 6 + 0.5·(7 − 6) = 6.5; IQR 2.5;
    // fences 4 − 3.75 = 0.25 and 6.5 + 3.75 = 10.25, so only 30 (input position 1) is outside.
    [Fact]
    public void TukeyFences_HandWorkedExample_FlagsTheFarValueByPosition()
    {
        var f = Feedback([5, 30, 2, 7, 4, 6, 4], FeedbackSettings.Default);
        Assert.Equal([false, true, false, false, false, false, false], f.IsOutlier);
        Assert.Equal(4, f.Q1, 12);
        Assert.Equal(6.5, f.Q3, 12);
        Assert.Equal(1, f.ExcludedCount);
        Assert.Equal(2, f.RetainedMin);
        Assert.Equal(7, f.RetainedMax);
        Assert.Equal(4.5, f.TrimmedMedian, 12); // median of 2, 4, 4, 5, 6, 7
        Assert.Equal(5, f.Median);
    }

    // Same quartiles as above (the sixth and seventh order statistics do not enter Q3): a value
    // exactly on the upper fence 10.25 is retained, 10.26 is not.
    [Theory]
    [InlineData(10.25, false)]
    [InlineData(10.26, true)]
    public void TukeyFences_ValueOnTheFence_IsRetained(double last, bool flagged)
    {
        var f = Feedback([2, 4, 4, 5, 6, 7, last], FeedbackSettings.Default);
        Assert.Equal(flagged, f.IsOutlier[6]);
    }

    [Fact]
    public void TukeyFences_LargerK_FlagsFewer()
    {
        // With k = 3 the upper fence is 6.5 + 7.5 = 14, still below 30; with k = 10 it is 31.5.
        Assert.Equal(1, Feedback([5, 30, 2, 7, 4, 6, 4], new FeedbackSettings { TukeyK = 3 }).ExcludedCount);
        Assert.Equal(0, Feedback([5, 30, 2, 7, 4, 6, 4], new FeedbackSettings { TukeyK = 10 }).ExcludedCount);
    }

    // Iglewicz & Hoaglin (1993) modified z-score M = 0.6745 (x − median) / MAD, by hand:
    // 1, 2, 3, 4, 5, 6, 50, 60: median 4.5; |deviations| sorted 0.5 0.5 1.5 1.5 2.5 3.5 45.5 55.5;
    // MAD = (1.5 + 2.5)/2 = 2; M(50) = 0.6745·45.5/2 = 15.3, M(60) = 18.7, M(1) = −1.18.
    [Fact]
    public void ModifiedZScore_HandWorkedExample_FlagsScoresAbove35()
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.ModifiedZScore };
        var f = Feedback([60, 1, 2, 3, 4, 5, 6, 50], settings);
        Assert.Equal([true, false, false, false, false, false, false, true], f.IsOutlier);
        Assert.Equal(3.5, f.TrimmedMedian, 12);
        Assert.Equal(1, f.RetainedMin);
        Assert.Equal(6, f.RetainedMax);
    }

    // By hand: 10..15 and 21, median 13, |deviations| 0 1 1 2 2 3 8, MAD 2; M(21) = 0.6745·8/2 = 2.698.
    [Theory]
    [InlineData(3.5, false)]
    [InlineData(2.7, false)]
    [InlineData(2.69, true)]
    [InlineData(1.0, true)]
    public void ModifiedZScore_Threshold_DecidesTheBorderlineValue(double threshold, bool flagged)
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.ModifiedZScore, ModifiedZThreshold = threshold };
        var f = Feedback([10, 11, 12, 13, 14, 15, 21], settings);
        Assert.Equal(flagged, f.IsOutlier[6]);
    }

    // MAD = 0 fallback (documented): 5, 5, 5, 5, 6, 40 has median 5 and MAD 0; MeanAD = 36/6 = 6;
    // cutoff 3.5·1.253314·6 = 26.3 on |x − 5|: 40 (deviation 35) is flagged, 6 is not.
    [Fact]
    public void ModifiedZScore_MadZero_FallsBackToMeanAbsoluteDeviation()
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.ModifiedZScore };
        var f = Feedback([5, 40, 5, 6, 5, 5], settings);
        Assert.Equal([false, true, false, false, false, false], f.IsOutlier);
    }

    [Fact]
    public void ModifiedZScore_AllEqual_FlagsNone()
    {
        var f = Feedback([3, 3, 3, 3], new FeedbackSettings { Rule = OutlierRule.ModifiedZScore });
        Assert.Equal(0, f.ExcludedCount);
    }

    // Reference: the median absolute deviation from MathNet.Numerics (median of |x − median|).
    [Fact]
    public void MedianAbsoluteDeviation_GeneratedSamples_MatchesMathNetMedianOfDeviations()
    {
        var random = new Random(5);
        for (var n = 1; n <= 80; n++)
        {
            var values = Enumerable.Range(0, n).Select(_ => (double)random.Next(0, 20)).Order().ToArray();
            var median = MathNetStatistics.Median(values);
            var expected = MathNetStatistics.Median(values.Select(x => Math.Abs(x - median)));
            Assert.Equal(expected, SampleAnalysis.MedianAbsoluteDeviation(values, median), 12);
        }
    }

    // Symmetric trim, by hand: n = 6, α = 0.2 cuts floor(1.2) = 1 per tail; sorted 1 1 2 3 9 9.
    // The tied 1s at positions 1 and 2: the earlier ranks lower and is cut; of the tied 9s at
    // positions 4 and 5 the later ranks higher and is cut. Retained 1, 2, 3, 9: median 2.5.
    [Fact]
    public void SymmetricTrim_TiesAtTheCuts_BrokenByInputPosition()
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.SymmetricTrim, TrimFraction = 0.2 };
        var f = Feedback([3, 1, 1, 2, 9, 9], settings);
        Assert.Equal([false, true, false, false, false, true], f.IsOutlier);
        Assert.Equal(2.5, f.TrimmedMedian);
        Assert.Equal(1, f.RetainedMin);
        Assert.Equal(9, f.RetainedMax);
        Assert.Equal(2, f.ExcludedCount);
    }

    [Fact]
    public void SymmetricTrim_AllTied_CutsFirstAndLastPositions()
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.SymmetricTrim, TrimFraction = 0.25 };
        var f = Feedback([4, 4, 4, 4, 4], settings);
        Assert.Equal([true, false, false, false, true], f.IsOutlier);
    }

    [Theory]
    [InlineData(0.0, 0)]
    [InlineData(0.1, 2)]  // floor(0.1·10) = 1 per tail
    [InlineData(0.3, 6)]  // floor(3) = 3 per tail
    [InlineData(0.45, 8)] // floor(4.5) = 4 per tail
    public void SymmetricTrim_TrimFraction_ExcludesFloorAlphaNPerTail(double alpha, int excluded)
    {
        var settings = new FeedbackSettings { Rule = OutlierRule.SymmetricTrim, TrimFraction = alpha };
        var values = Enumerable.Range(1, 10).Select(i => (double)i).ToArray();
        Assert.Equal(excluded, Feedback(values, settings).ExcludedCount);
    }
}
