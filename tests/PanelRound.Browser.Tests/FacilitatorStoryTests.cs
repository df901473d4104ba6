using System.Globalization;
using System.IO.Compression;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Playwright;
using PanelRound.Data.Entities;

namespace PanelRound.Browser.Tests;

/// <summary>
/// The facilitator's story in Chromium, from nothing to the financial model: a panel created from scratch with one
/// Point and one Range question and five experts, two rounds answered through the experts' links, the conclusion
/// reviewed and confirmed, and the consensus downloaded as CSV, XLSX and the PDF dossier.
/// </summary>
public sealed class FacilitatorStoryTests(BrowserApp app) : IClassFixture<BrowserApp>
{
    private const string Title = "Harbourside outlook 2027-2031, browser story";

    [SkippableFact]
    public async Task NewPanel_TwoRounds_Concluded_ConsensusDownloaded()
    {
        app.Require();
        var staff = await app.SignInAsync("Facilitator", 1366);
        var page = staff.Page;
        page.Dialog += (_, d) => d.AcceptAsync();

        // A panel from scratch.
        await page.GotoAsync($"{app.BaseUrl}/Staff/Panels");
        await page.ClickAsync("#create-panel");
        await page.FillAsync("#Input_Title", Title);
        await page.FillAsync("#Input_Brief", "Five-year view of new-build prices and prime office rents for the harbourside scheme.");
        await page.FillAsync("#Input_StartsOn", "2026-12-01");
        await page.FillAsync("#Input_TargetPeriods", "2027-2031");
        await page.FillAsync("#Input_TimeZone", "Europe/Lisbon");
        await page.FillAsync("#Input_ContactName", "Research desk");
        await page.FillAsync("#Input_ContactEmail", "research@calderport-demo.example");
        await staff.CheckAsync("story-panel-create");
        await page.ClickAsync("#create-draft");
        await Assertions.Expect(page.Locator("h1")).ToHaveTextAsync(Title);
        await Assertions.Expect(page.Locator("#flash")).ToBeVisibleAsync();
        var panelId = int.Parse(page.Url.Split('/').Last().Split('?')[0], CultureInfo.InvariantCulture);

        // One Point and one Range question.
        await AddQuestionAsync(page, "apt-price-old-harbour", "New-build price, harbourside", "Point", (0, 20000, 3000, 9000));
        await AddQuestionAsync(page, "office-rent-prime", "Prime office rent, harbourside", "Range", (0, 100, 15, 45));
        await Assertions.Expect(page.Locator("#questions + div table tbody tr")).ToHaveCountAsync(2);

        // Opening a round with nobody on the panel is refused, and the page says why.
        await Assertions.Expect(page.Locator("#open-round")).ToBeDisabledAsync();

        // Five experts from the roster; each link stays listed on this visit.
        var options = await page.Locator("#expertId option").EvaluateAllAsync<string[]>("os => os.map(o => o.value).filter(v => v)");
        Assert.True(options.Length >= 5, "The demo roster has at least five experts.");
        foreach (var id in options.Take(5))
        {
            await page.SelectOptionAsync("#expertId", id);
            await page.ClickAsync("#add-member");
            await Assertions.Expect(page.Locator("#flash")).ToBeVisibleAsync();
        }
        var links = await page.Locator("#issued-links input[data-issued-link]").EvaluateAllAsync<string[]>("xs => xs.map(x => x.value)");
        Assert.Equal(5, links.Distinct().Count());
        Assert.All(links, l => Assert.Contains("/e/", l, StringComparison.Ordinal));
        await staff.CheckAsync("story-panel-draft-with-experts");

        // Round 1 and round 2, each answered by all five experts and closed.
        for (var round = 1; round <= 2; round++)
        {
            await page.FillAsync("#ClosesAt", DateTime.UtcNow.AddDays(10).ToString("yyyy-MM-ddTHH:mm", CultureInfo.InvariantCulture));
            await page.ClickAsync("#open-round");
            await Assertions.Expect(page.Locator("#open-round-card")).ToContainTextAsync($"Round {round}");
            for (var e = 0; e < links.Length; e++)
            {
                await AnswerAsync(links[e], e, round);
            }
            await page.ReloadAsync();
            await Assertions.Expect(page.GetByText("5 of 5 answered")).ToBeVisibleAsync();
            await page.ClickAsync("#close-round");
            await Assertions.Expect(page.Locator("#flash")).ToContainTextAsync($"{round}");
        }

        // The conclusion: reviewed per question and period, then confirmed.
        await page.ClickAsync("#review-conclusion");
        await Assertions.Expect(page.Locator("section#conclude .conclude-review")).ToBeVisibleAsync();
        await Assertions.Expect(page.Locator("section#conclude .conclude-review tbody tr:not(:has(th[scope=rowgroup]))")).ToHaveCountAsync(10);
        await staff.CheckAsync("story-conclusion-review");
        await page.CheckAsync("#ConfirmConclusion");
        await page.ClickAsync("#conclude-submit");
        await Assertions.Expect(page.Locator("#flash")).ToBeVisibleAsync();
        Assert.Equal(PanelState.Concluded, await app.WithDbAsync(db => db.Panels.Where(p => p.Id == panelId).Select(p => p.State).SingleAsync()));

        // The consensus reaches the financial model: CSV, XLSX and the dossier from the results page.
        await page.GotoAsync($"{app.BaseUrl}/Staff/Panels/Results/{panelId}");
        var csv = Encoding.UTF8.GetString(await DownloadAsync(page, "Consensus (CSV)"));
        var stored = await app.WithDbAsync(db => db.Consensus.Where(c => c.PanelId == panelId).CountAsync());
        Assert.Equal(10, stored);
        var lines = csv.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(1 + stored, lines.Length);
        Assert.Contains("apt-price-old-harbour", csv, StringComparison.Ordinal);
        Assert.Contains("office-rent-prime", csv, StringComparison.Ordinal);

        var xlsx = await DownloadAsync(page, "Consensus (XLSX)");
        using (var zip = new ZipArchive(new MemoryStream(xlsx)))
        {
            Assert.NotNull(zip.GetEntry("xl/workbook.xml"));
        }
        var pdf = await DownloadAsync(page, "Dossier (PDF)");
        Assert.Equal("%PDF-", Encoding.ASCII.GetString(pdf, 0, 5));
        await staff.CheckAsync("story-results-concluded");
        staff.AssertNothingBlocked();
    }

    private async Task AddQuestionAsync(IPage page, string indicatorKey, string label, string format, (double HardMin, double HardMax, double PlausibleMin, double PlausibleMax) bounds)
    {
        var indicatorId = await app.WithDbAsync(db => db.Indicators.Where(i => i.Key == indicatorKey).Select(i => i.Id).SingleAsync());
        await page.ClickAsync("#add-question");
        await page.SelectOptionAsync("#Input_IndicatorId", indicatorId.ToString(CultureInfo.InvariantCulture));
        await page.FillAsync("#Input_Label", label);
        await page.SelectOptionAsync("#Input_Format", format);
        await page.FillAsync("#Input_HardMin", bounds.HardMin.ToString(CultureInfo.InvariantCulture));
        await page.FillAsync("#Input_HardMax", bounds.HardMax.ToString(CultureInfo.InvariantCulture));
        await page.FillAsync("#Input_PlausibleMin", bounds.PlausibleMin.ToString(CultureInfo.InvariantCulture));
        await page.FillAsync("#Input_PlausibleMax", bounds.PlausibleMax.ToString(CultureInfo.InvariantCulture));
        await page.ClickAsync("button[type=submit]:has-text('Save')");
        await Assertions.Expect(page.Locator("#flash")).ToBeVisibleAsync();
    }

    /// <summary>One expert answers every period through the personal link, in a browser of their own.</summary>
    private async Task AnswerAsync(string link, int expert, int round)
    {
        var watched = await app.NewPageAsync(1366);
        var page = watched.Page;
        page.Dialog += (_, d) => d.AcceptAsync();
        await page.GotoAsync(link);
        await Assertions.Expect(page.Locator("h1")).ToHaveTextAsync(Title);
        // Round 2 moves every expert a little towards the middle, as a panel does after reading its feedback.
        var shift = round == 1 ? expert - 2 : (expert - 2) / 2.0;
        foreach (var input in await page.Locator("input[name$='.Value']").AllAsync())
        {
            await input.FillAsync((6000 + 150 * shift).ToString("0", CultureInfo.InvariantCulture));
        }
        foreach (var (suffix, centre) in new[] { ("P10", 24.0), ("P50", 28.0), ("P90", 33.0) })
        {
            foreach (var input in await page.Locator($"input[name$='.{suffix}']").AllAsync())
            {
                await input.FillAsync((centre + 0.5 * shift).ToString("0.0", CultureInfo.InvariantCulture));
            }
        }
        foreach (var rationale in await page.Locator("textarea[name$='.Rationale']").AllAsync())
        {
            await rationale.FillAsync($"Round {round}: supply pipeline and financing conditions as I read them.");
        }
        await page.ClickAsync("#submit-answers");
        await Assertions.Expect(page.Locator("#saved")).ToContainTextAsync($"round {round}", new() { IgnoreCase = true });
        watched.AssertNothingBlocked();
        await watched.CloseAsync();
    }

    private static async Task<byte[]> DownloadAsync(IPage page, string linkText)
    {
        var download = await page.RunAndWaitForDownloadAsync(() => page.GetByRole(AriaRole.Link, new() { Name = linkText, Exact = true }).ClickAsync());
        await using var stream = await download.CreateReadStreamAsync();
        using var buffer = new MemoryStream();
        await stream.CopyToAsync(buffer);
        return buffer.ToArray();
    }
}
