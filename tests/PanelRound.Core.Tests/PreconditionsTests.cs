namespace PanelRound.Core.Tests;

public class PreconditionsTests
{
    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void CheckFinite_NonFinite_Throws(double value)
        => Assert.Throws<ArgumentOutOfRangeException>(() => Preconditions.CheckFinite(value));

    [Theory]
    [InlineData(0.0, true)]
    [InlineData(1.0, true)]
    [InlineData(1.0000001, false)]
    [InlineData(-0.0000001, false)]
    [InlineData(double.NaN, false)]
    public void CheckInRange_Double_AcceptsClosedInterval(double value, bool ok)
    {
        var ex = Record.Exception(() => Preconditions.CheckInRange(value, 0.0, 1.0));
        Assert.Equal(ok, ex is null);
    }

    [Fact]
    public void CheckInRange_ParameterName_IsTheCallerExpression()
    {
        var threshold = -1.0;
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => Preconditions.CheckInRange(threshold, 0.0, 1.0));
        Assert.Equal("threshold", ex.ParamName);
    }

    [Fact]
    public void CheckNotNull_Null_Throws()
        => Assert.Throws<ArgumentNullException>(() => Preconditions.CheckNotNull<string>(null));

    [Fact]
    public void CheckAllFinite_NaNElement_NamesTheIndex()
    {
        var ex = Assert.Throws<ArgumentException>(() => Preconditions.CheckAllFinite(new[] { 1.0, 2.0, double.NaN }));
        Assert.Contains("Element 2", ex.Message, StringComparison.Ordinal);
    }
}
