using System.Net;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Reports;

/// <summary>
/// The reviewer's screens on the demo: settings and methods in words (never an identifier of the code), no negative
/// zero, a chart for screens and one for phones, and one identifier scheme per table, explained.
/// </summary>
public abstract partial class ResultsPageTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>Identifiers of settings and methods as the code and the API name them; a page writes them in words.</summary>
    private static readonly string[] Identifiers =
    [
        "TukeyFences", "SymmetricTrim", "ModifiedZScore", "TrimmedMedian", "WeightedTrimmedMedian", "QuantileAverage",
        "WeightedQuantileAverage", "CalibrationWeightedPool", "CalibrationWeightedMedian", "TrackRecord", "weighting Equal",
    ];

    [SkippableFact]
    public async Task PanelList_EachTitleLinksToAPageTheRoleMayOpen()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        foreach (var (role, page) in new[] { (Roles.Reviewer, "Results"), (Roles.Facilitator, "Details") })
        {
            var client = await StaffPages.SignedInClientAsync(app, role);
            var list = await client.GetStringAsync("/Staff/Panels");
            var link = Regex.Match(list, $"<th scope=\"row\" class=\"fw-normal\"><a href=\"([^\"]+/{p.PanelId})\">Defect panel</a></th>");
            Assert.True(link.Success, $"{role}: no title link to panel {p.PanelId}.");
            Assert.Equal($"/Staff/Panels/{page}/{p.PanelId}", link.Groups[1].Value);
            Assert.Equal(HttpStatusCode.OK, (await client.GetAsync(link.Groups[1].Value)).StatusCode);
        }
    }

    [SkippableFact]
    public async Task ResultsPage_RoundStillOpen_StopAdviceSaysSoFar_AfterTheCloseSaysAfterRoundN()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 5);
        var expert = app.Client();
        for (var i = 0; i < 5; i++)
        {
            // Five answers within 0.1% of each other: consensus by the panel's default threshold.
            await p.SubmitAsync(expert, i, 4000 + i);
        }
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        string Badges(string html) => string.Join(" | ", Regex.Matches(html, "<span class=\"badge [^\"]*\" id=\"advice-q-\\d+\">([^<]+)</span>").Select(m => m.Groups[1].Value));

        var live = Badges(await pages.GetStringAsync($"/Staff/Panels/Results/{p.PanelId}"));
        Assert.Equal("Round 1 still open, so far: consensus reached | Round 1 still open, so far: consensus reached", live);

        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        var closed = Badges(await pages.GetStringAsync($"/Staff/Panels/Results/{p.PanelId}"));
        Assert.Equal("After round 1: consensus reached | After round 1: consensus reached", closed);
    }

    [SkippableFact]
    public async Task ResultsPage_EveryDemoPanel_WordsNotIdentifiers_NoNegativeZero_ChartsForScreenAndPhone()
    {
        var app = await StartDemoAsync();
        var reviewer = await StaffCookieClient.SignedInAsync(app, Roles.Reviewer);
        var panels = await app.WithDbAsync(db => db.Panels.AsNoTracking().Select(p => new { p.Id, p.State }).ToListAsync());
        Assert.Contains(panels, p => p.State == PanelState.Running);
        Assert.Contains(panels, p => p.State == PanelState.Concluded);

        foreach (var panel in panels)
        {
            var response = await reviewer.GetAsync($"/Staff/Panels/Results/{panel.Id}");
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var html = await response.Content.ReadAsStringAsync();
            var text = WebUtility.HtmlDecode(Tags().Replace(html, " "));
            foreach (var id in Identifiers)
            {
                Assert.False(text.Contains(id, StringComparison.Ordinal), $"Panel {panel.Id}: the page shows \"{id}\".");
            }
            Assert.DoesNotMatch(NegativeZero(), text);
            Assert.Contains("Tukey fences", text, StringComparison.Ordinal);
            if (panel.State == PanelState.Concluded)
            {
                Assert.Contains("trimmed median", text, StringComparison.Ordinal);
            }
            // Every question's chart comes as a wide and a phone drawing; the histograms sit in the grid that gives them room.
            var charts = Regex.Count(html, "class=\"chart-wide\"");
            Assert.True(charts > 0, $"Panel {panel.Id}: no chart.");
            Assert.Equal(charts, Regex.Count(html, "class=\"chart-narrow\""));
            Assert.Contains("class=\"histogram-grid\"", html, StringComparison.Ordinal);
            Assert.Contains("id=\"identifier-note\"", html, StringComparison.Ordinal);
        }
    }

    [SkippableFact]
    public async Task ScorecardPage_ExpertsByRosterName_TheOtherIdentifiersExplainedNotMixedIn()
    {
        var app = await StartDemoAsync();
        var reviewer = await StaffCookieClient.SignedInAsync(app, Roles.Reviewer);
        var experts = await app.WithDbAsync(db => db.Experts.AsNoTracking().Where(e => e.ExternalKey != null).Select(e => new { e.Name, e.ExternalKey }).ToListAsync());
        Assert.NotEmpty(experts);

        var html = await reviewer.GetStringAsync("/Staff/Scorecard");
        Assert.Contains("id=\"identifier-note\"", html, StringComparison.Ordinal);
        var table = Table().Match(html);
        Assert.True(table.Success, "The scorecard has no experts table (id=\"scorecard-experts\").");
        var body = table.Groups[1].Value;
        Assert.Contains("Expert (roster name)", table.Value, StringComparison.Ordinal);
        // The table body names experts by roster name only: no external key beside them.
        Assert.Contains(experts, e => body.Contains(WebUtility.HtmlEncode(e.Name), StringComparison.Ordinal));
        Assert.All(experts, e => Assert.DoesNotContain(">" + e.ExternalKey + "<", body, StringComparison.Ordinal));
        Assert.All(experts, e => Assert.DoesNotContain(" " + e.ExternalKey + "<", body, StringComparison.Ordinal));
        Assert.Contains("class=\"table table-sm table-striped align-middle sortable\"", html, StringComparison.Ordinal);
    }

    [GeneratedRegex("<[^>]*>")]
    private static partial Regex Tags();

    /// <summary>A minus before a zero that is the whole number: "-0", "-0.0", "-0.00" (not "-0.01", not "2019-09").</summary>
    [GeneratedRegex(@"(?<![\w.])-0(\.0+)?(?![\d.])")]
    private static partial Regex NegativeZero();

    [GeneratedRegex("<table[^>]*id=\"scorecard-experts\"[^>]*>.*?<tbody>(.*?)</tbody>", RegexOptions.Singleline)]
    private static partial Regex Table();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteResultsPageTests(SqliteFixture fixture) : ResultsPageTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresResultsPageTests(PostgresFixture fixture) : ResultsPageTests(fixture);
