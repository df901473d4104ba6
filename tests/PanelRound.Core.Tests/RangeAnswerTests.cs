using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

public class RangeAnswerTests
{
    [Theory]
    [InlineData(1.0, 2.0, 3.0)]
    [InlineData(2.0, 2.0, 2.0)]
    [InlineData(-5.0, -5.0, 0.0)]
    [InlineData(0.01, 0.02, 1e9)]
    public void TryCreate_OrderedFiniteValues_IsValid(double p10, double p50, double p90)
    {
        var result = RangeAnswer.TryCreate(p10, p50, p90);
        Assert.True(result.IsValid);
        Assert.Equal((p10, p50, p90), (result.Answer.P10, result.Answer.P50, result.Answer.P90));
        Assert.Null(result.Field);
    }

    [Theory]
    [InlineData(3.0, 2.0, 4.0, "P10")]
    [InlineData(1.0, 3.0, 2.0, "P90")]
    [InlineData(5.0, 4.0, 3.0, "P10")]
    [InlineData(double.NaN, 1.0, 2.0, "P10")]
    [InlineData(1.0, double.PositiveInfinity, 2.0, "P50")]
    [InlineData(1.0, 2.0, double.NegativeInfinity, "P90")]
    [InlineData(1.0, double.NaN, double.NaN, "P50")]
    public void TryCreate_InvalidValues_NamesTheField(double p10, double p50, double p90, string field)
    {
        var result = RangeAnswer.TryCreate(p10, p50, p90);
        Assert.False(result.IsValid);
        Assert.Null(result.Answer);
        Assert.Equal(field, result.Field);
        Assert.Contains(field, result.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Constructor_Unordered_Throws()
        => Assert.Throws<ArgumentException>(() => new RangeAnswer(3, 2, 1));

    [Fact]
    public void Deconstruct_ReturnsTheThreeQuantiles()
    {
        var (p10, p50, p90) = new RangeAnswer(1, 2, 3);
        Assert.Equal((1.0, 2.0, 3.0), (p10, p50, p90));
    }
}
