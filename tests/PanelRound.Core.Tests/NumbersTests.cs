using PanelRound.Core.Domain;

namespace PanelRound.Core.Tests;

/// <summary>The explicit rules for reading numbers (no published source: the rules are the product's own, documented on <see cref="Numbers"/>).</summary>
public class NumbersTests
{
    [Theory]
    [InlineData("1.5", 1.5)]
    [InlineData("-1234.25", -1234.25)]
    [InlineData("+7", 7)]
    [InlineData(".5", 0.5)]
    [InlineData("1e3", 1000)]
    [InlineData("2.5E-3", 0.0025)]
    [InlineData("0", 0)]
    [InlineData("0.000e-999", 0)]
    [InlineData("1e12", 1e12)]
    [InlineData("-1e12", -1e12)]
    public void TryParseInvariant_PlainNumber_Read(string text, double expected)
    {
        var r = Numbers.TryParseInvariant(text);
        Assert.True(r.IsValid, r.Error);
        Assert.Equal(expected, r.Value);
    }

    [Theory]
    [InlineData("1,5")]
    [InlineData("1 234")]
    [InlineData("1e-400")]
    [InlineData("4.9e-324")]
    [InlineData("1e309")]
    [InlineData("1.7e308")]
    [InlineData("1000000000001")]
    [InlineData("NaN")]
    [InlineData("Infinity")]
    [InlineData("0x10")]
    [InlineData("1.2.3")]
    [InlineData("")]
    [InlineData("e5")]
    [InlineData("1e")]
    public void TryParseInvariant_NotAPlainNumberOrBeyondTheLimits_Refused(string text)
    {
        Assert.False(Numbers.TryParseInvariant(text).IsValid);
    }

    [Theory]
    [InlineData("1,5", DecimalSeparator.Comma, 1.5)]
    [InlineData("1 234,5", DecimalSeparator.Comma, 1234.5)]
    [InlineData("1\u00A0234\u00A0567,25", DecimalSeparator.Comma, 1234567.25)]
    [InlineData("−3,5", DecimalSeparator.Comma, -3.5)]
    [InlineData("1.5", DecimalSeparator.Point, 1.5)]
    [InlineData("1 234.5", DecimalSeparator.Point, 1234.5)]
    [InlineData("1'234.5", DecimalSeparator.Point, 1234.5)]
    [InlineData("4.125", DecimalSeparator.Point, 4.125)]
    [InlineData("4,125", DecimalSeparator.Comma, 4.125)]
    public void TryParseEntry_WithTheChosenSeparator_ReadAsTyped(string text, DecimalSeparator separator, double expected)
    {
        var r = Numbers.TryParseEntry(text, separator);
        Assert.True(r.IsValid, r.Error);
        Assert.Equal(expected, r.Value);
    }

    [Theory]
    [InlineData("1,5", DecimalSeparator.Point)]
    [InlineData("1,234", DecimalSeparator.Point)]
    [InlineData("1,234.5", DecimalSeparator.Point)]
    [InlineData("1.5", DecimalSeparator.Comma)]
    [InlineData("1.234,5", DecimalSeparator.Comma)]
    [InlineData("12 34,5", DecimalSeparator.Comma)]
    [InlineData("1 2", DecimalSeparator.Point)]
    [InlineData("1,5,6", DecimalSeparator.Comma)]
    [InlineData("abc", DecimalSeparator.Point)]
    [InlineData("1e-400", DecimalSeparator.Point)]
    public void TryParseEntry_AmbiguousOrOtherSeparator_RefusedNeverChanged(string text, DecimalSeparator separator)
    {
        var r = Numbers.TryParseEntry(text, separator);
        Assert.False(r.IsValid, $"'{text}' was read as {r.Value}");
        Assert.False(string.IsNullOrWhiteSpace(r.Error));
    }
}
