using System.Globalization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Playwright;

namespace PanelRound.Browser.Tests;

/// <summary>
/// The reviewer's story in Chromium: a corrected outcome is recorded, and the scorecard, one expert's page and the
/// backtest are read; the expert's page scores the forecast against the corrected value.
/// </summary>
public sealed class ReviewerStoryTests(BrowserApp app) : IClassFixture<BrowserApp>
{
    [SkippableTheory]
    [InlineData(1366)]
    [InlineData(375)]
    public async Task OutcomeRecorded_ScorecardExpertAndBacktestRead(int width)
    {
        app.Require();
        // The demo's last concluded panel asked about 2025; one of its experts answered the Old Harbour price question.
        var panel = app.Scenario.Panels.Where(p => p.Concluded).OrderBy(p => p.TargetPeriods).Last();
        const string indicator = "apt-price-old-harbour";
        var period = panel.TargetPeriods.Split(',').Last();
        var expertKey = app.Scenario.Estimates.First(e => e.Panel == panel.Key && e.Indicator == indicator && e.Period == period).Expert;
        var expertId = await app.WithDbAsync(db => db.Experts.Where(x => x.ExternalKey == expertKey).Select(x => x.Id).SingleAsync());
        var staff = await app.SignInAsync("Reviewer", width);
        var page = staff.Page;

        // A corrected outcome (each width records its own value, so each run changes the score).
        var current = await app.WithDbAsync(db => db.Observations
            .Where(o => o.Indicator!.Key == indicator && o.Period == period && o.SupersededAt == null).Select(o => o.Value).SingleAsync());
        var corrected = Math.Round(current + (width == 375 ? 137 : 211));
        await page.GotoAsync($"{app.BaseUrl}/Staff/Outcomes");
        await page.SelectOptionAsync("#Input_Indicator", indicator);
        await page.FillAsync("#Input_Period", period);
        await page.FillAsync("#Input_Value", corrected.ToString(CultureInfo.InvariantCulture));
        await page.FillAsync("#Input_Source", "Observatory bulletin, revised (browser story)");
        await page.ClickAsync("button[type=submit]:has-text('Record')");
        await Assertions.Expect(page.Locator(".alert-success")).ToBeVisibleAsync();
        var row = page.Locator("#outcome-periods tbody tr").Filter(new() { HasText = "Old Harbour" })
            .Filter(new() { Has = page.Locator($"td:text-is('{period}')") });
        await Assertions.Expect(row).ToContainTextAsync(corrected.ToString("N0", CultureInfo.InvariantCulture));
        await staff.CheckAsync("story-outcome-recorded");

        // The scorecard: a sortable table of experts by roster name.
        await page.GotoAsync($"{app.BaseUrl}/Staff/Scorecard");
        var table = page.Locator("#scorecard-experts");
        await Assertions.Expect(table).ToBeVisibleAsync();
        var header = table.Locator("th button.sort-button").First;
        await header.ClickAsync();
        await Assertions.Expect(table.Locator("th[aria-sort]").First).ToHaveAttributeAsync("aria-sort", new System.Text.RegularExpressions.Regex("ascending|descending"));

        // One expert's page: the forecast for that period is scored against the corrected outcome,
        // error = forecast − outcome (the design's sign convention: positive is an optimist).
        await page.GotoAsync($"{app.BaseUrl}/Staff/Scorecard/Expert/{expertId}");
        var track = page.Locator("xpath=//h2[contains(., 'Old Harbour')]/following-sibling::div[contains(@class, 'table-responsive')][1]");
        var forecastRow = track.Locator("tr").Filter(new() { HasText = panel.Title }).Filter(new() { HasText = "(final)" })
            .Filter(new() { Has = page.Locator($"td:text-is('{period}')") });
        var cells = await forecastRow.First.Locator("td").AllInnerTextsAsync();
        var forecast = Parse(cells[3]);
        Assert.Equal(corrected, Parse(cells[5]));
        Assert.Equal(forecast - corrected, Parse(cells[6]), 0);
        await staff.CheckAsync("story-scorecard-expert");

        // The backtest opens with its pooled result in words.
        await page.GotoAsync($"{app.BaseUrl}/Staff/Scorecard/Backtest");
        await Assertions.Expect(page.Locator("#backtest-summary")).ToBeVisibleAsync();
        await staff.CheckAsync("story-backtest");
        staff.AssertNothingBlocked();
    }

    /// <summary>A figure as the page prints it: thousands separators, a typographic minus or plus sign.</summary>
    private static double Parse(string text) =>
        double.Parse(text.Trim().Replace("\u2212", "-", StringComparison.Ordinal).Replace("+", "", StringComparison.Ordinal).Replace(",", "", StringComparison.Ordinal), NumberStyles.Float, CultureInfo.InvariantCulture);
}
