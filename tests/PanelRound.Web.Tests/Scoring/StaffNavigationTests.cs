using System.Net;
using System.Text.RegularExpressions;
using PanelRound.Data.Entities;
using PanelRound.Web.Pages.Shared;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Scoring;

/// <summary>
/// The staff menu offers each role exactly the pages it may open: every link in the rendered menu answers 200, and
/// every page of the menu's catalogue that is not shown refuses the role (403, or the cookie's redirect to the
/// access-denied page).
/// </summary>
public abstract partial class StaffNavigationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    public static TheoryData<string> StaffRoles => [Roles.Reviewer, Roles.Facilitator, Roles.Administrator];

    [SkippableTheory]
    [MemberData(nameof(StaffRoles))]
    public async Task Menu_EveryRole_LinksOnlyToPagesThatOpen_AndHidesThoseThatRefuse(string role)
    {
        var app = await StartAsync();
        var client = await StaffCookieClient.SignedInAsync(app, role);
        var home = await client.GetAsync("/Staff/Panels");
        Assert.Equal(HttpStatusCode.OK, home.StatusCode);
        var html = await home.Content.ReadAsStringAsync();

        var menu = Menu().Match(html);
        Assert.True(menu.Success, "The page has no staff menu (<div id=\"staff-nav\">).");
        var shown = Link().Matches(menu.Groups[1].Value).Select(m => m.Groups[1].Value).ToList();
        Assert.NotEmpty(shown);
        foreach (var href in shown)
        {
            var response = await client.GetAsync(href);
            Assert.True(response.StatusCode == HttpStatusCode.OK, $"{role}: the menu links to {href}, which answers {(int)response.StatusCode} {response.Headers.Location}");
        }
        foreach (var hidden in StaffNavigation.All.Select(l => l.Href).Except(shown))
        {
            var response = await client.GetAsync(hidden);
            Assert.True(PageAuthorizationTests.Classify(response) == PageAuthorizationTests.Answer.AccessDenied,
                $"{role}: the menu hides {hidden}, which answers {(int)response.StatusCode} {response.Headers.Location}");
        }

        // What each role is expected to see, from the policies in AuthSetup (common practice: least privilege in menus as in pages).
        IEnumerable<string> expected = role switch
        {
            Roles.Reviewer => ["/Staff/Panels", "/Staff/Indicators", "/Staff/Outcomes", "/Staff/Scorecard", "/api-reference"],
            Roles.Facilitator => ["/Staff/Panels", "/Staff/Indicators", "/Staff/Experts", "/Staff/Outcomes", "/Staff/Scorecard", "/Staff/Imports", "/api-reference"],
            _ => StaffNavigation.All.Select(l => l.Href),
        };
        Assert.Equal(expected, shown);
    }

    [GeneratedRegex("<div class=\"collapse navbar-collapse\" id=\"staff-nav\">(.*?)</ul>", RegexOptions.Singleline)]
    private static partial Regex Menu();

    [GeneratedRegex("<a class=\"nav-link[^\"]*\" href=\"([^\"]+)\"")]
    private static partial Regex Link();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteStaffNavigationTests(SqliteFixture fixture) : StaffNavigationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresStaffNavigationTests(PostgresFixture fixture) : StaffNavigationTests(fixture);
