using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

public class NaiveScaleTests
{
    [Fact]
    public void InSampleNaiveMae_IssueTrainingSeries_IsThree()
    {
        // Hyndman & Koehler (2006), section 3.4: (1/(n − 1))·Σ |y_t − y_{t−1}| = (4 + 1 + 4 + 3) / 4.
        var result = NaiveScale.InSampleNaiveMae([100, 104, 103, 107, 110]);
        Assert.True(result.IsAvailable);
        Assert.Equal(3, result.Value, 12);
        Assert.Equal(5, result.N);
        Assert.Null(result.Reason);
    }

    [Fact]
    public void InSampleNaiveMae_TwoPoints_IsTheirDistance()
    {
        Assert.Equal(7, NaiveScale.InSampleNaiveMae([10, 3]).Value, 12);
    }

    [Theory]
    [InlineData(new double[0], ScaleProblem.NoReferenceSeries)]
    [InlineData(new double[] { 5 }, ScaleProblem.TooFewPoints)]
    [InlineData(new double[] { 5, 5, 5 }, ScaleProblem.NoChange)]
    public void InSampleNaiveMae_Unavailable_IsAResultWithAReason(double[] series, ScaleProblem problem)
    {
        var result = NaiveScale.InSampleNaiveMae(series);
        Assert.False(result.IsAvailable);
        Assert.Equal(problem, result.Problem);
        Assert.True(double.IsNaN(result.Value));
        Assert.NotNull(result.Reason);
        Assert.False(result.TryGetValue(out _));
    }

    [Fact]
    public void InSampleNaiveMae_NonFinite_Throws()
    {
        Assert.Throws<ArgumentException>(() => NaiveScale.InSampleNaiveMae([1, double.NaN]));
    }

    [Fact]
    public void LastValue_IsTheNoChangeForecast()
    {
        Assert.Equal(110, NaiveScale.LastValue([100, 104, 103, 107, 110]));
        Assert.Null(NaiveScale.LastValue([]));
    }
}
