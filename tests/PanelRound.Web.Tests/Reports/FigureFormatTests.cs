using PanelRound.Web.Infrastructure;
using PanelRound.Web.Pages;
using PanelRound.Web.Pages.Staff.Scorecard;

namespace PanelRound.Web.Tests.Reports;

/// <summary>
/// How pages write skills, errors and differences: a value that rounds to zero is written 0.00, never "-0.00"
/// (nor "+0.00"), whatever helper writes it.
/// </summary>
public class FigureFormatTests
{
    [Theory]
    [InlineData(-0.001, "0.00")]
    [InlineData(-0.004999, "0.00")]
    [InlineData(0.004, "0.00")]
    [InlineData(-0.0, "0.00")]
    [InlineData(-0.005, "-0.01")]
    [InlineData(-1234.5, "-1,234.50")]
    public void Number_ValueThatRoundsToZero_HasNoSign(double value, string expected) =>
        Assert.Equal(expected, ScorecardFormat.Number(value));

    [Theory]
    [InlineData(-0.001, "0.00")]
    [InlineData(0.001, "0.00")]
    [InlineData(-0.0, "0.00")]
    [InlineData(0.006, "+0.01")]
    [InlineData(-0.006, "-0.01")]
    public void Signed_ValueThatRoundsToZero_HasNoSign(double value, string expected) =>
        Assert.Equal(expected, ScorecardFormat.Signed(value));

    [Fact]
    public void Change_ThatRoundsToZero_IsNeitherBetterNorWorse()
    {
        Assert.Equal("0.00", ScorecardFormat.Change(-0.001));
        Assert.Equal("0.00", ScorecardFormat.Change(0.001));
        Assert.Equal("-0.10 (better)", ScorecardFormat.Change(-0.1));
    }

    [Fact]
    public void PageNumbers_ThatRoundToZero_HaveNoSign()
    {
        Assert.Equal("0.00", PageSupport.Num(-0.0001, 2));
        Assert.Equal("0", PageSupport.Num(-0.2, 0));
        Assert.Equal("0.0%", PageSupport.Pct(-0.0001));
        Assert.Equal("0%", ScorecardFormat.Percent(-0.001));
        Assert.Equal("–", ScorecardFormat.Number(double.NaN));
    }

    [Fact]
    public void SharedFormatter_PercentagesAndCustomFormats_WriteNoNegativeZero()
    {
        Assert.Equal("0.0%", NumberText.SignedPercent(-0.0004));
        Assert.Equal("+25.0%", NumberText.SignedPercent(0.25));
        Assert.Equal("-3.1%", NumberText.SignedPercent(-0.0314));
        Assert.Equal("0", NumberText.Format(-0.0001, "#,##0.###"));
        Assert.Equal("0.000", NumberText.Format(-0.0001, "0.000"));
        Assert.Equal("-1,234.568", NumberText.Format(-1234.5678, "#,##0.###"));
        Assert.Equal(NumberText.Missing, NumberText.Fixed(null, 2));
        Assert.Equal(NumberText.Missing, NumberText.Signed(double.PositiveInfinity, 2));
    }
}
