using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

public class ConsensusTests
{
    // The Tukey worked example (OutlierRuleTests): 30 is excluded; retained 2, 4, 4, 5, 6, 7.
    // HF7 on the retained: median 4.5; Q1 h = 5·0.25 + 1 = 2.25 → 4; Q3 h = 4.75 → 5 + 0.75·1 = 5.75.
    [Fact]
    public void ForPoint_Default_IsTrimmedMedianWithRetainedQuartileBand()
    {
        var c = Consensus.ForPoint([5, 30, 2, 7, 4, 6, 4], FeedbackSettings.Default);
        Assert.Equal(new ConsensusValue(4.5, 4, 5.75, 7, ConsensusMethod.TrimmedMedian), c);
    }

    [Fact]
    public void ForPoint_Weighted_UsesRetainedAnswersOnly()
    {
        // The excluded 30 carries a huge weight, which must not matter: with equal weights on the
        // retained answers the result equals the unweighted one.
        var c = Consensus.ForPoint([5, 30, 2, 7, 4, 6, 4], FeedbackSettings.Default, [1, 1000, 1, 1, 1, 1, 1]);
        Assert.Equal(ConsensusMethod.WeightedTrimmedMedian, c.Method);
        Assert.Equal(4.5, c.Value, 12);
        Assert.Equal(4, c.Low, 12);
        Assert.Equal(5.75, c.High, 12);
    }

    [Fact]
    public void ForPoint_WeightedHandExample_FollowsWeightedMedianDefinition()
    {
        // No outliers in 1, 2, 3; weights 1, 1, 2 → weighted median 2 + 1/6 (WeightedQuantileTests).
        var c = Consensus.ForPoint([1, 2, 3], FeedbackSettings.Default, [1, 1, 2]);
        Assert.Equal(2 + (1.0 / 6.0), c.Value, 12);
    }

    [Fact]
    public void ForPoint_RetainedAnswersAllWeightless_FallsBackToTrimmedMedian()
    {
        var c = Consensus.ForPoint([5, 30, 2, 7, 4, 6, 4], FeedbackSettings.Default, [0, 1, 0, 0, 0, 0, 0]);
        Assert.Equal(ConsensusMethod.TrimmedMedian, c.Method);
        Assert.Equal(4.5, c.Value);
    }

    // Quantile averaging with the trim per quantile (same hand example as the range feedback).
    [Fact]
    public void ForRange_Unweighted_IsTrimmedQuantileAverage()
    {
        RangeAnswer[] answers = [new(1, 2, 3), new(2, 3, 5), new(0, 4, 6), new(1, 5, 9)];
        var c = Consensus.ForRange(answers, new FeedbackSettings { TrimFraction = 0.25 });
        Assert.Equal(new ConsensusValue(3.5, 1, 5.5, 4, ConsensusMethod.QuantileAverage), c);
    }

    // Weighted trimmed mean by hand: P50s 1, 2, 3, 4 with weights 2, 1, 1, 0. The zero weight is
    // left out (m = 3), β = floor(0.25·3)/3 = 0, so the plain weighted mean (2·1 + 2 + 3)/4 = 1.75.
    // With weights 1, 1, 1, 1: β = 1/4, the mean of 2 and 3 = 2.5.
    [Theory]
    [InlineData(new double[] { 2, 1, 1, 0 }, 1.75)]
    [InlineData(new double[] { 1, 1, 1, 1 }, 2.5)]
    public void ForRange_Weighted_HandWorkedTrimmedMean(double[] weights, double expected)
    {
        RangeAnswer[] answers = [new(0, 1, 10), new(0, 2, 10), new(0, 3, 10), new(0, 4, 10)];
        var c = Consensus.ForRange(answers, new FeedbackSettings { TrimFraction = 0.25 }, weights);
        Assert.Equal(expected, c.Value, 12);
        Assert.Equal(0, c.Low);
        Assert.Equal(10, c.High);
        Assert.Equal(ConsensusMethod.WeightedQuantileAverage, c.Method);
    }

    // Weighted trimmed mean with a fractional cut through one expert's mass: P50s 0, 10, 20, 30
    // with weights 1, 1, 1, 5 (masses 0.125, 0.125, 0.125, 0.625) and β = 1/4: the retained mass
    // [0.25, 0.75] holds 0.125 of 20 and 0.375 of 30 → (2.5 + 11.25)/0.5 = 27.5.
    [Fact]
    public void ForRange_WeightedHeavyExpert_IntegratesTheQuantileFunction()
    {
        RangeAnswer[] answers = [new(0, 0, 40), new(0, 10, 40), new(0, 20, 40), new(0, 30, 40)];
        var c = Consensus.ForRange(answers, new FeedbackSettings { TrimFraction = 0.25 }, [1, 1, 1, 5]);
        Assert.Equal(27.5, c.Value, 12);
    }

    [Fact]
    public void ForPoint_Empty_Throws()
        => Assert.Throws<ArgumentException>(() => Consensus.ForPoint([], FeedbackSettings.Default));

    [Fact]
    public void ForPoint_WeightCountMismatch_Throws()
        => Assert.Throws<ArgumentException>(() => Consensus.ForPoint([1, 2, 3], FeedbackSettings.Default, [1, 1]));
}
