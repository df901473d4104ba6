using PanelRound.Data.Entities;
using PanelRound.Web.Pages;
using PanelRound.Web.Pages.Staff.Scorecard;

namespace PanelRound.Web.Tests.Reports;

/// <summary>Settings, formats and scores as staff pages write them: words, never identifiers, and no negative zero.</summary>
public class PageWordsTests
{
    [Fact]
    public void Score_NegativeZero_WrittenWithoutASign()
    {
        var negativeZero = -0.0;
        Assert.True(double.IsNegative(negativeZero));
        Assert.Equal("0.000", ScorecardFormat.Score(negativeZero));
    }

    [Theory]
    [InlineData(0.0, "0.000")]
    [InlineData(0.4567, "0.457")]
    [InlineData(0.0004, "4.00E-4")]
    [InlineData(double.NaN, "–")]
    public void Score_SmallValues_ThreeDecimalsOrScientific(double value, string expected) =>
        Assert.Equal(expected, ScorecardFormat.Score(value));

    [Theory]
    [InlineData(-0.004, 2, "0.00")]
    [InlineData(0.004, 2, "0.00")]
    [InlineData(-0.2, 0, "0")]
    [InlineData(1.5, 2, "+1.50")]
    [InlineData(-1.5, 2, "-1.50")]
    public void Signed_DifferenceThatRoundsToZero_HasNoSign(double value, int decimals, string expected) =>
        Assert.Equal(expected, PageSupport.Signed(value, decimals));

    [Theory]
    [InlineData("Equal", "equal weights")]
    [InlineData("TrackRecord", "track-record weights")]
    [InlineData("Calibration", "calibration-question weights")]
    public void WeightingWords_EveryWeighting_IsWords(string weighting, string expected)
    {
        Assert.True(Enum.IsDefined(Enum.Parse<ConsensusWeighting>(weighting)));
        Assert.Equal(expected, PageSupport.WeightingWords(weighting));
    }

    [Fact]
    public void FormatWords_EveryFormat_IsWords()
    {
        Assert.Equal("single value", PageSupport.FormatWords(ResponseFormat.Point));
        Assert.Equal("range: P10, P50, P90", PageSupport.FormatWords(ResponseFormat.Range));
    }
}
