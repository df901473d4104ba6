using Microsoft.EntityFrameworkCore;
using Microsoft.Playwright;
using PanelRound.Data.Entities;

namespace PanelRound.Browser.Tests;

/// <summary>
/// Every main page of the demo, as each role meets it, at a laptop's and a phone's width: axe-core finds no serious
/// or critical violation, nothing is blocked by the Content-Security-Policy, no page scrolls sideways, and a
/// screenshot of each is kept (<see cref="PageChecks.ScreenshotFolder"/>).
/// </summary>
public sealed class MainPagesTests(BrowserApp app) : IClassFixture<BrowserApp>
{
    public static TheoryData<int> Widths => new(BrowserApp.Widths);

    [SkippableTheory]
    [MemberData(nameof(Widths))]
    public async Task ExpertAndSignedOutPages(int width)
    {
        app.Require();
        var open = app.Scenario.Panels.Single(p => !p.Concluded);
        var concluded = app.Scenario.Panels.First(p => p.Concluded);
        var pages = new List<(string Name, string Path)>
        {
            ("home-signed-out", "/"),
            ("sign-in", "/Account/Login"),
            ("expert-link-needed", "/expert/link-needed"),
        };
        var failures = await TourAsync(await app.NewPageAsync(width), pages);

        // An expert of the running panel, and one of a concluded panel, through their personal links.
        foreach (var (name, token) in new[] { ("expert-round-open", open.Members[0].Token), ("expert-concluded", concluded.Members[0].Token) })
        {
            var expert = await app.NewPageAsync(width);
            failures.AddRange(await TourAsync(expert, [(name, $"/e/{token}")]));
            await expert.CloseAsync();
        }
        Assert.True(failures.Count == 0, string.Join("\n", failures));
    }

    [SkippableTheory]
    [MemberData(nameof(Widths))]
    public async Task FacilitatorPages(int width)
    {
        app.Require();
        var (running, concluded, indicator) = await app.WithDbAsync(async db => (
            await db.Panels.Where(p => p.State != PanelState.Concluded).OrderBy(p => p.Id).Select(p => p.Id).FirstAsync(),
            await db.Panels.Where(p => p.State == PanelState.Concluded).OrderByDescending(p => p.Id).Select(p => p.Id).FirstAsync(),
            await db.Indicators.OrderBy(i => i.Id).Select(i => i.Id).FirstAsync()));
        var question = await app.WithDbAsync(db => db.Questions.Where(q => q.PanelId == running).OrderBy(q => q.Order).Select(q => q.Id).FirstAsync());
        var pages = new List<(string, string)>
        {
            ("panels", "/Staff/Panels"),
            ("panel-create", "/Staff/Panels/Create"),
            ("panel-running", $"/Staff/Panels/Details/{running}"),
            ("panel-running-edit", $"/Staff/Panels/Edit/{running}"),
            ("panel-running-question", $"/Staff/Panels/Question?panelId={running}&questionId={question}"),
            ("panel-running-results", $"/Staff/Panels/Results/{running}"),
            ("panel-running-calibration", $"/Staff/Panels/Calibration/{running}"),
            ("panel-concluded", $"/Staff/Panels/Details/{concluded}"),
            ("panel-concluded-results", $"/Staff/Panels/Results/{concluded}"),
            ("indicators", "/Staff/Indicators"),
            ("indicator", $"/Staff/Indicators/Details/{indicator}"),
            ("experts", "/Staff/Experts"),
            ("imports", "/Staff/Imports"),
            ("home-facilitator", "/"),
        };
        var failures = await TourAsync(await app.SignInAsync("Facilitator", width), pages);
        Assert.True(failures.Count == 0, string.Join("\n", failures));
    }

    [SkippableTheory]
    [MemberData(nameof(Widths))]
    public async Task ReviewerAndAdministratorPages(int width)
    {
        app.Require();
        var (expert, panel) = await app.WithDbAsync(async db => (
            await db.Experts.OrderBy(e => e.Id).Select(e => e.Id).FirstAsync(),
            await db.Panels.Where(p => p.State == PanelState.Concluded).OrderBy(p => p.Id).Select(p => p.Id).FirstAsync()));
        var pages = new List<(string, string)>
        {
            ("outcomes", "/Staff/Outcomes"),
            ("scorecard", "/Staff/Scorecard"),
            ("scorecard-expert", $"/Staff/Scorecard/Expert/{expert}"),
            ("scorecard-panel", $"/Staff/Scorecard/Panel/{panel}"),
            ("backtest", "/Staff/Scorecard/Backtest"),
            ("home-reviewer", "/"),
        };
        var failures = await TourAsync(await app.SignInAsync("Reviewer", width), pages);
        failures.AddRange(await TourAsync(await app.SignInAsync("Administrator", width), [("administration", "/Admin")]));
        Assert.True(failures.Count == 0, string.Join("\n", failures));
    }

    /// <summary>Visits each page, checks it, and returns one line per problem (all pages are visited even after a failure).</summary>
    private async Task<List<string>> TourAsync(WatchedPage page, IReadOnlyList<(string Name, string Path)> pages)
    {
        var failures = new List<string>();
        foreach (var (name, path) in pages)
        {
            var response = await page.Page.GotoAsync(app.BaseUrl + path);
            if (response is null || response.Status != 200)
            {
                failures.Add($"{name} ({path}): HTTP {response?.Status}");
                continue;
            }
            await page.Page.WaitForLoadStateAsync(LoadState.NetworkIdle);
            await page.ShootAsync(name);
            foreach (var v in await page.SeriousViolationsAsync())
            {
                failures.Add($"{name} at {page.Width} px: {v}");
            }
            // Nothing wider than the screen: a phone reader never scrolls the whole page sideways (a wide table
            // scrolls inside its own frame).
            var overflow = await page.Page.EvaluateAsync<int>("() => document.documentElement.scrollWidth - document.documentElement.clientWidth");
            if (overflow > 1)
            {
                failures.Add($"{name} at {page.Width} px: the page is {overflow} px wider than the screen");
            }
        }
        failures.AddRange(page.Blocked);
        await page.CloseAsync();
        return failures;
    }
}
