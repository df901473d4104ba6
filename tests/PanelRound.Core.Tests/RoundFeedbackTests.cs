using MathNet.Numerics.Statistics;
using PanelRound.Core.Statistics;
using MathNetStatistics = MathNet.Numerics.Statistics.Statistics;

namespace PanelRound.Core.Tests;

public class RoundFeedbackTests
{
    [Theory]
    [InlineData(0, 3, true)]
    [InlineData(1, 3, true)]
    [InlineData(2, 3, true)]
    [InlineData(3, 3, false)]
    [InlineData(4, 5, true)]
    [InlineData(5, 5, false)]
    public void ForPoint_FewerAnswersThanMinimumGroupSize_IsWithheld(int n, int minimum, bool withheld)
    {
        var values = Enumerable.Range(0, n).Select(i => 100.0 + i).ToArray();
        var result = RoundFeedback.ForPoint(values, new FeedbackSettings { MinimumGroupSize = minimum });
        Assert.Equal(withheld, result.IsWithheld);
        Assert.Equal(n, result.N);
        Assert.Equal(minimum, result.MinimumGroupSize);
        Assert.Equal(withheld, result.Feedback is null);
    }

    [Fact]
    public void ForPoint_Withheld_GetFeedbackOrThrowThrows()
        => Assert.Throws<InvalidOperationException>(() => RoundFeedback.ForPoint([1, 2], FeedbackSettings.Default).GetFeedbackOrThrow());

    [Theory]
    [InlineData(2)]
    [InlineData(1)]
    [InlineData(0)]
    [InlineData(-3)]
    public void FeedbackSettings_MinimumGroupSizeBelowThree_Throws(int minimum)
        => Assert.Throws<ArgumentOutOfRangeException>(() => new FeedbackSettings { MinimumGroupSize = minimum });

    [Theory]
    [InlineData(0.5)]
    [InlineData(-0.01)]
    [InlineData(double.NaN)]
    public void FeedbackSettings_TrimFractionOutOfRange_Throws(double alpha)
        => Assert.Throws<ArgumentOutOfRangeException>(() => new FeedbackSettings { TrimFraction = alpha });

    [Fact]
    public void FeedbackSettings_Defaults_AreTheDocumentedOnes()
    {
        var s = FeedbackSettings.Default;
        Assert.Equal(OutlierRule.TukeyFences, s.Rule);
        Assert.Equal(0.10, s.TrimFraction);
        Assert.Equal(1.5, s.TukeyK);
        Assert.Equal(3.5, s.ModifiedZThreshold);
        Assert.Equal(3, s.MinimumGroupSize);
        Assert.Equal(20, s.MaxHistogramBins);
        Assert.Equal(QuantileMethod.HyndmanFan7, s.Method);
    }

    [Fact]
    public void ForPoint_NonFiniteAnswer_Throws()
        => Assert.Throws<ArgumentException>(() => RoundFeedback.ForPoint([1, double.NaN, 3, 4], FeedbackSettings.Default));

    // Reference: MathNet.Numerics quartiles (R7), median and a plain trimmed mean over generated answers.
    [Fact]
    public void ForPoint_GeneratedAnswers_MatchMathNetStatistics()
    {
        var random = new Random(3);
        for (var n = 3; n <= 60; n++)
        {
            var values = Enumerable.Range(0, n).Select(_ => 4000 + Math.Round(random.NextDouble() * 800)).ToArray();
            var f = RoundFeedback.ForPoint(values, FeedbackSettings.Default).GetFeedbackOrThrow();
            var q1 = MathNetStatistics.QuantileCustom(values, 0.25, QuantileDefinition.R7);
            var q3 = MathNetStatistics.QuantileCustom(values, 0.75, QuantileDefinition.R7);
            var median = MathNetStatistics.Median(values);
            Assert.Equal(q1, f.Q1, 9);
            Assert.Equal(q3, f.Q3, 9);
            Assert.Equal(median, f.Median, 9);
            Assert.Equal(q3 - q1, f.Iqr, 9);
            Assert.Equal((q3 - q1) / Math.Abs(median), f.RelativeIqr!.Value, 12);
            var k = n / 10;
            Assert.Equal(values.Order().Skip(k).Take(n - (2 * k)).Average(), f.TrimmedMean, 9);
        }
    }

    [Fact]
    public void ForPoint_MedianZero_RelativeIqrIsNull()
    {
        var f = RoundFeedback.ForPoint([-1, 0, 1], FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Null(f.RelativeIqr);
        Assert.Equal(1, f.Iqr);
    }

    [Fact]
    public void ForPoint_NegativeMedian_RelativeIqrUsesAbsoluteMedian()
    {
        // HF7 on −12, −10, −8: Q1 = −11, Q3 = −9, IQR 2, |median| 10.
        var f = RoundFeedback.ForPoint([-8, -12, -10], FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Equal(0.2, f.RelativeIqr!.Value, 12);
    }

    // Freedman & Diaconis (1981) bin width 2·IQR·n^(−1/3), as numpy.histogram_bin_edges(bins='fd')
    // computes it (from memory: numpy uses the type-7 IQR and ceil(range / width) bins).
    // 1..8: IQR = 6.25 − 2.75 = 3.5, width 2·3.5/2 = 3.5, range 7 → 2 bins of 4.
    [Fact]
    public void Histogram_FreedmanDiaconis_HandWorkedBins()
    {
        var f = RoundFeedback.ForPoint([8, 7, 6, 5, 4, 3, 2, 1], FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Equal([new HistogramBin(1, 4.5, 4), new HistogramBin(4.5, 8, 4)], f.Histogram);
    }

    // IQR 0 → Sturges (1926): ceil(log2 8) + 1 = 4 equal bins over [5, 9].
    [Fact]
    public void Histogram_IqrZero_FallsBackToSturges()
    {
        var f = RoundFeedback.ForPoint([5, 5, 5, 5, 5, 5, 5, 9], FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Equal(
            [new HistogramBin(5, 6, 7), new HistogramBin(6, 7, 0), new HistogramBin(7, 8, 0), new HistogramBin(8, 9, 1)],
            f.Histogram);
    }

    [Fact]
    public void Histogram_AllEqual_HasOneBinWithEveryAnswer()
    {
        var f = RoundFeedback.ForPoint([2.5, 2.5, 2.5], FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Equal([new HistogramBin(2.5, 2.5, 3)], f.Histogram);
    }

    [Theory]
    [InlineData(20)]
    [InlineData(7)]
    [InlineData(1)]
    public void Histogram_FarOutlier_IsCappedAtMaxBins(int cap)
    {
        // 0..99 and 1e6: FD width ≈ 2·49.5/101^(1/3) ≈ 21, range 1e6 → tens of thousands of bins before the cap.
        var values = Enumerable.Range(0, 100).Select(i => (double)i).Append(1e6).ToArray();
        var f = RoundFeedback.ForPoint(values, new FeedbackSettings { MaxHistogramBins = cap }).GetFeedbackOrThrow();
        Assert.Equal(cap, f.Histogram.Count);
        Assert.Equal(101, f.Histogram.Sum(b => b.Count));
        Assert.Equal(0, f.Histogram[0].Lower);
        Assert.Equal(1e6, f.Histogram[^1].Upper);
    }

    [Fact]
    public void ForPoint_ListAndReadOnlyCollectionInputs_GiveTheSameAsArrays()
    {
        double[] values = [5, 30, 2, 7, 4, 6, 4];
        var fromArray = RoundFeedback.ForPoint(values, FeedbackSettings.Default).GetFeedbackOrThrow();
        var fromList = RoundFeedback.ForPoint(values.ToList(), FeedbackSettings.Default).GetFeedbackOrThrow();
        var fromReadOnly = RoundFeedback.ForPoint(values.ToList().AsReadOnly(), FeedbackSettings.Default).GetFeedbackOrThrow();
        Assert.Equal(fromArray.IsOutlier, fromList.IsOutlier);
        Assert.Equal(fromArray.IsOutlier, fromReadOnly.IsOutlier);
        Assert.Equal(fromArray.TrimmedMedian, fromReadOnly.TrimmedMedian);
    }

    // Quantile averaging (Vincent 1912; Ratcliff 1979) with the trim per quantile, by hand:
    // P10s 1, 2, 0, 1; P50s 2, 3, 4, 5; P90s 3, 5, 6, 9. Trim 0.1 cuts floor(0.4) = 0: plain means
    // 1, 3.5, 5.75. Trim 0.25 cuts 1 per tail: means of 1, 1 / 3, 4 / 5, 6 = 1, 3.5, 5.5.
    [Theory]
    [InlineData(0.10, 1.0, 3.5, 5.75)]
    [InlineData(0.25, 1.0, 3.5, 5.5)]
    public void ForRange_HandWorkedAnswers_AggregatesByTrimmedQuantileAveraging(double trim, double p10, double p50, double p90)
    {
        RangeAnswer[] answers = [new(1, 2, 3), new(2, 3, 5), new(0, 4, 6), new(1, 5, 9)];
        var f = RoundFeedback.ForRange(answers, new FeedbackSettings { TrimFraction = trim }).GetFeedbackOrThrow();
        Assert.Equal(4, f.N);
        Assert.Equal(p10, f.AggregatedP10, 12);
        Assert.Equal(p50, f.AggregatedP50, 12);
        Assert.Equal(p90, f.AggregatedP90, 12);
        Assert.Equal(3.5, f.P50.Median, 12);
        Assert.Equal(1, f.P10.Median, 12);
        Assert.Equal(5.5, f.P90.Median, 12);
    }

    [Fact]
    public void ForRange_TwoAnswers_IsWithheld()
    {
        var result = RoundFeedback.ForRange([new RangeAnswer(1, 2, 3), new RangeAnswer(1, 2, 4)], FeedbackSettings.Default);
        Assert.True(result.IsWithheld);
        Assert.Equal(2, result.N);
    }
}
