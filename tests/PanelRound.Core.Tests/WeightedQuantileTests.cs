using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

public class WeightedQuantileTests
{
    // Worked by hand from the documented definition: values 1, 2, 3 with weights 1, 1, 2 normalise
    // to 0.25, 0.25, 0.5; positions u = 0, (0.5 − 0.125 − 0.125)/(1 − 0.125 − 0.25) = 0.4, 1.
    // At p = 0.5: 2 + (0.5 − 0.4)/(1 − 0.4)·(3 − 2) = 2 + 1/6.
    [Fact]
    public void WeightedMedian_HandWorkedExample_InterpolatesBetweenMidpointPositions()
        => Assert.Equal(2 + (1.0 / 6.0), Quantiles.WeightedMedian([3, 1, 2], [2, 1, 1]), 12);

    [Theory]
    [InlineData(0.0, 1.0)]
    [InlineData(0.4, 2.0)]
    [InlineData(1.0, 3.0)]
    [InlineData(0.2, 1.5)] // halfway between u = 0 and u = 0.4
    public void WeightedQuantile_HandWorkedExample_HitsPositions(double p, double expected)
        => Assert.Equal(expected, Quantiles.WeightedQuantile([1, 2, 3], [1, 1, 2], p), 12);

    // Equal weights reduce to Hyndman & Fan type 7 (checked here on fixed data against the
    // HF7 examples of Hyndman & Fan 1996; the property test covers random data).
    [Fact]
    public void WeightedQuantile_EqualWeightsOnReferenceData_EqualsHyndmanFan7()
    {
        double[] values = [15, 20, 35, 40, 50];
        Assert.Equal(29, Quantiles.WeightedQuantile(values, [3, 3, 3, 3, 3], 0.4), 9);
        var ten = Enumerable.Range(1, 10).Select(i => (double)i).ToArray();
        Assert.Equal(3.25, Quantiles.WeightedQuantile(ten, Enumerable.Repeat(0.1, 10).ToArray(), 0.25), 9);
    }

    [Fact]
    public void WeightedQuantile_ZeroWeights_AreLeftOut()
    {
        // The 1000 carries no weight, so this is the HF7 median of 1, 2, 3, 4 = 2.5.
        Assert.Equal(2.5, Quantiles.WeightedMedian([1, 1000, 2, 3, 4], [1, 0, 1, 1, 1]), 12);
    }

    [Fact]
    public void WeightedQuantile_SinglePositiveWeight_ReturnsItsValue()
        => Assert.Equal(7, Quantiles.WeightedQuantile([1, 7, 9], [0, 5, 0], 0.9));

    [Fact]
    public void WeightedMedian_DominantWeight_PullsTowardsThatValue()
    {
        var unweighted = Quantiles.WeightedMedian([1, 2, 3, 10], [1, 1, 1, 1]);
        var weighted = Quantiles.WeightedMedian([1, 2, 3, 10], [1, 1, 1, 20]);
        Assert.True(weighted > unweighted);
        Assert.True(weighted <= 10);
    }

    public static TheoryData<double[]> BadWeights => new()
    {
        new double[] { 1, 1 },
        new double[] { 1, -1, 1 },
        new double[] { 0, 0, 0 },
        new double[] { 1, double.NaN, 1 },
        new double[] { 1, double.PositiveInfinity, 1 },
    };

    [Theory]
    [MemberData(nameof(BadWeights))]
    public void WeightedQuantile_InvalidWeights_Throw(double[] weights)
        => Assert.ThrowsAny<ArgumentException>(() => Quantiles.WeightedQuantile([1, 2, 3], weights, 0.5));
}
