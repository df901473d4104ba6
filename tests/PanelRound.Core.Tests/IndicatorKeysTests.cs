using PanelRound.Core.Domain;

namespace PanelRound.Core.Tests;

/// <summary>The shape of an indicator key (no published source: the rule is the product's own, documented on <see cref="IndicatorKeys"/>).</summary>
public class IndicatorKeysTests
{
    [Theory]
    [InlineData("apt-price-old-harbour")]
    [InlineData("a")]
    [InlineData("9")]
    [InlineData("cap-rate-2")]
    public void IsWellFormed_LowerCaseDigitsAndDashes_True(string key) => Assert.True(IndicatorKeys.IsWellFormed(key));

    [Theory]
    [InlineData("")]
    [InlineData("-rent")]
    [InlineData("Rent")]
    [InlineData("rent price")]
    [InlineData("rent_price")]
    [InlineData("loyer-é")]
    public void IsWellFormed_OtherCharactersOrLeadingDash_False(string key) => Assert.False(IndicatorKeys.IsWellFormed(key));
}
