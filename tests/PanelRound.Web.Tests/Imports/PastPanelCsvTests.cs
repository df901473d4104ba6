using System.Text;
using PanelRound.Core.Domain;
using PanelRound.Web.Features.Imports;

namespace PanelRound.Web.Tests.Imports;

/// <summary>
/// The past-panel files read without a database (no published source: the columns and rules are
/// the product's own, documented on <c>PastPanelImport</c>; the CSV syntax is RFC 4180).
/// </summary>
public class PastPanelCsvTests
{
    private static readonly DateOnly Today = new(2027, 6, 15);

    private static MemoryStream File(string text) => new(Encoding.UTF8.GetBytes(text));

    private const string ForecastHeader = "panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value,p10,p50,p90\n";

    [Fact]
    public void Parse_ValidFiles_RowsWithTheirValues()
    {
        var result = PastPanelCsv.Parse(
            File(ForecastHeader
                + "P-2020,2020-03-01,2020-05-01,Rent-Old-Harbour,EUR/m²,2022,EXP-1,1,12.5,,,\n"
                + "P-2020,2020-03-01,,rent-old-harbour,EUR/m²,2022,EXP-1,2,13,,,\n"
                + "P-2020,2020-03-01,,cap-rate,%,2022,EXP-1,1,,4,4.5,5\n"),
            File("indicator,period,value,source,observed_on\nrent-old-harbour,2022,12.75,Registry,\ncap-rate,2022Q4,4.4,,2023-02-01\n"),
            Today, 90);

        Assert.True(result.IsOk, string.Join("; ", result.Errors.SelectMany(e => e.Value)));
        var rows = result.Value!;
        Assert.Equal(3, rows.Forecasts.Count);
        var first = rows.Forecasts[0];
        Assert.Equal(("P-2020", "rent-old-harbour", Period.Parse("2022"), "EXP-1", 1, 12.5), (first.Panel, first.Indicator, first.Period, first.Expert, first.Round, first.Value));
        // The closing day given on the panel's first row holds for its later rows.
        Assert.Equal(new DateOnly(2020, 5, 1), rows.Forecasts[1].PanelClosed);
        var range = rows.Forecasts[2];
        Assert.True(range.IsRange);
        Assert.Equal((4.0, 4.5, 5.0), (range.P10!.Value, range.P50!.Value, range.P90!.Value));

        var rent = rows.Observations[0];
        // Without observed_on: the period's end plus the publication lag (2022-12-31 + 90 days).
        Assert.Equal(new DateOnly(2023, 3, 31), rent.ObservedOn);
        Assert.Equal(2, rent.Decimals);
        Assert.Equal(new DateOnly(2023, 2, 1), rows.Observations[1].ObservedOn);
    }

    [Fact]
    public void Parse_MissingColumns_ErrorUnderTheFilesKey()
    {
        var result = PastPanelCsv.Parse(File("panel,indicator,value\nP,x,1\n"), File("indicator,value\nx,1\n"), Today, 90);
        Assert.False(result.IsOk);
        Assert.Contains("panel_start", Assert.Single(result.Errors["forecasts"]), StringComparison.Ordinal);
        Assert.Contains("lacks period", Assert.Single(result.Errors["observations"]), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("P,2020-03-01,,rent,EUR,2022,E,1,5,4,5,6", "either value or p10, p50 and p90")]
    [InlineData("P,2020-03-01,,rent,EUR,2022,E,1,,6,5,4", "p10 <= p50 <= p90")]
    [InlineData("P,2020-03-01,,rent,EUR,2019,E,1,5,,,", "ends before panel_start")]
    [InlineData("P,2020-13-01,,rent,EUR,2022,E,1,5,,,", "panel_start '2020-13-01' is not a date")]
    [InlineData("P,2020-03-01,,rent price,EUR,2022,E,1,5,,,", "is not a key")]
    [InlineData("P,2020-03-01,,rent,EUR,2022,E,0,5,,,", "is not a round number")]
    [InlineData("P,2020-03-01,,rent,EUR,2022,E,1,1e13,,,", "value '1e13' is larger in magnitude than 1e12")]
    public void Parse_BadForecastRow_ErrorKeyedByFileAndRow(string row, string expected)
    {
        var result = PastPanelCsv.Parse(File(ForecastHeader + row + "\n"), null, Today, 90);
        Assert.False(result.IsOk);
        var message = Assert.Single(result.Errors["forecasts row 1"]);
        Assert.StartsWith("Row 1 (line 2): ", message, StringComparison.Ordinal);
        Assert.Contains(expected, message, StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_RulesAcrossRows_LaterRowRefused()
    {
        var result = PastPanelCsv.Parse(File(ForecastHeader
            + "P,2020-03-01,,rent,EUR,2022,E,1,5,,,\n"
            + "P,2020-04-01,,rent,EUR,2023,E,1,5,,,\n"     // another start for the panel
            + "P,2020-03-01,,rent,USD,2024,E,1,5,,,\n"     // another unit for the indicator
            + "P,2020-03-01,,rent,EUR,2022,E,1,6,,,\n"),   // the same forecast twice
            null, Today, 90);
        Assert.False(result.IsOk);
        Assert.False(result.Errors.ContainsKey("forecasts row 1"));
        Assert.Contains("another panel_start", Assert.Single(result.Errors["forecasts row 2"]), StringComparison.Ordinal);
        Assert.Contains("has unit 'EUR' on an earlier row", Assert.Single(result.Errors["forecasts row 3"]), StringComparison.Ordinal);
        Assert.Contains("has another forecast of rent 2022", Assert.Single(result.Errors["forecasts row 4"]), StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_BadObservationRows_ErrorsKeyedByRow()
    {
        var result = PastPanelCsv.Parse(
            File(ForecastHeader + "P,2020-03-01,,rent,EUR,2022,E,1,5,,,\n"),
            File("indicator,period,value,observed_on\nrent,2022,1,2022-06-30\nrent,2021,,\nrent,2021,2,\nrent,2021,3,\n"),
            Today, 90);
        Assert.False(result.IsOk);
        Assert.Contains("before the period ends", Assert.Single(result.Errors["observations row 1"]), StringComparison.Ordinal);
        Assert.Contains("value is empty", Assert.Single(result.Errors["observations row 2"]), StringComparison.Ordinal);
        Assert.False(result.Errors.ContainsKey("observations row 3"));
        Assert.Contains("rent 2021 appears twice", Assert.Single(result.Errors["observations row 4"]), StringComparison.Ordinal);
    }

    [Fact]
    public void Parse_UnreadableFile_ErrorNamesTheRowNever500()
    {
        var result = PastPanelCsv.Parse(File(ForecastHeader + "P,2020-03-01,,rent,EUR,2022,E,1,\"5,,,\n"), null, Today, 90);
        Assert.False(result.IsOk);
        Assert.Contains(result.Errors.Keys, k => k.StartsWith("forecasts", StringComparison.Ordinal));
    }

    [Fact]
    public void Parse_MoreErrorsThanReported_FirstOnesListedAndAllCounted()
    {
        var rows = string.Concat(Enumerable.Range(0, RowErrorReport.MaxReported + 50).Select(_ => "P,2020-03-01,,rent,EUR,2022,E,0,5,,,\n"));
        var result = PastPanelCsv.Parse(File(ForecastHeader + rows), null, Today, 90);
        Assert.False(result.IsOk);
        Assert.Equal(RowErrorReport.MaxReported, result.Errors.Count(e => e.Key.StartsWith("forecasts row ", StringComparison.Ordinal)));
        Assert.Equal($"{RowErrorReport.MaxReported + 50} errors in all; the first {RowErrorReport.MaxReported} are listed.", Assert.Single(result.Errors["file"]));
    }
}
