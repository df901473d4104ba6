using System.Net;
using System.Net.Http.Json;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using MimeKit;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Panels;

/// <summary>
/// The facilitator's panel screens and the messages experts receive: no round opens without an
/// expert to answer it, invitations and reminders give the round's deadline in UTC and in the
/// panel's time zone with a contact, irreversible actions ask first, every action says what it
/// did, links issued on a visit stay listed, and concluding shows what would be published first.
/// </summary>
public abstract partial class FacilitatorScreenTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static async Task<(HttpClient Staff, int PanelId, int IndicatorId)> DraftAsync(TestApp app, object? extra = null)
    {
        var staff = await app.StaffClientAsync();
        var key = "ind-" + Guid.NewGuid().ToString("N")[..8];
        var indicatorId = (int)(await staff.PostOk("/api/indicators", new { key, name = "Harbour price", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        var panelId = (int)(await staff.PostOk("/api/panels", extra ?? new { title = "Harbour outlook", startsOn = "2026-11-02", targetPeriods = "2027-2028" }))["id"]!;
        await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId, label = "Price per m²", format = "Point", hardMin = 1, hardMax = 100000 });
        return (staff, panelId, indicatorId);
    }

    private static async Task<int> AddExpertAsync(HttpClient staff, int panelId, string email, bool invite = false)
    {
        var expertId = (int)(await staff.PostOk("/api/experts", new { name = "Ada " + email.Split('@')[0], email }))["id"]!;
        return (int)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId, sendInvitation = invite }))["membershipId"]!;
    }

    /// <summary>The text of the mails in the outbox sent to the address.</summary>
    private static List<string> MailsTo(TestApp app, string address) =>
        !Directory.Exists(app.OutboxFolder) ? [] : Directory.GetFiles(app.OutboxFolder, "*.eml").Select(f => MimeMessage.Load(f))
            .Where(m => m.To.Mailboxes.Any(b => b.Address == address)).Select(m => m.Subject + "\n" + m.TextBody).ToList();

    [SkippableFact]
    public async Task OpenRound_NoExpertOnThePanel_ApiAnswers409WithTheReason_AndThePageRefusesToo()
    {
        var app = await StartAsync();
        var (staff, panelId, _) = await DraftAsync(app);

        var (status, problem) = await staff.Post($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        Assert.Equal(HttpStatusCode.Conflict, status);
        Assert.Contains("Add at least one expert before opening a round", (string)problem!["detail"]!, StringComparison.Ordinal);

        // A revoked link is nobody to answer either.
        var membership = await AddExpertAsync(staff, panelId, $"gone-{panelId}@panel.example");
        await staff.PostOk($"/api/panels/{panelId}/members/{membership}/revoke", new { }, HttpStatusCode.OK);
        (status, problem) = await staff.Post($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        Assert.Equal(HttpStatusCode.Conflict, status);
        Assert.Contains("nobody could answer it", (string)problem!["detail"]!, StringComparison.Ordinal);

        // The page says so before the button, and a forced post is refused with the same reason.
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var url = $"/Staff/Panels/Details/{panelId}";
        var html = WebUtility.HtmlDecode(await pages.GetStringAsync(url));
        Assert.Contains("Add at least one expert before opening a round", html, StringComparison.Ordinal);
        var response = await pages.PostFormAsync(url + "?handler=OpenRound", StaffPages.TokenOf(html),
            [new("ClosesAt", DateTime.UtcNow.AddDays(9).ToString("yyyy-MM-ddTHH:mm", System.Globalization.CultureInfo.InvariantCulture))]);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Contains("nobody could answer it", WebUtility.HtmlDecode(await response.Content.ReadAsStringAsync()), StringComparison.Ordinal);
        Assert.Equal(0, await app.WithDbAsync(db => db.Rounds.CountAsync(r => r.PanelId == panelId)));

        // With an expert the same call opens round 1.
        await AddExpertAsync(staff, panelId, $"here-{panelId}@panel.example");
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
    }

    /// <remarks>
    /// The expected local time is read from the IANA time zone database's rule for Portugal (UTC+1,
    /// "WEST", from the last Sunday of March to the last Sunday of October), not from the code under test.
    /// </remarks>
    [SkippableFact]
    public async Task Invitation_RoundOpen_GivesTheDeadlineInUtcAndInThePanelsTimeZone_AndTheContact()
    {
        var app = await StartAsync();
        app.Clock!.StopAt(new DateTimeOffset(2027, 1, 10, 9, 0, 0, TimeSpan.Zero));
        var (staff, panelId, _) = await DraftAsync(app, new
        {
            title = "Harbour outlook 2028", startsOn = "2026-11-02", targetPeriods = "2028-2029", timeZone = "Europe/Lisbon",
            contactName = "Calderport research desk", contactEmail = "research@calderport-demo.example",
        });
        var early = $"early-{panelId}@panel.example";
        await AddExpertAsync(staff, panelId, early, invite: true);
        var before = Assert.Single(MailsTo(app, early));
        Assert.Contains("Harbour outlook 2028", before, StringComparison.Ordinal);
        Assert.Contains("The first round has not opened yet", before, StringComparison.Ordinal);
        Assert.Contains("Calderport research desk", before, StringComparison.Ordinal);
        Assert.Contains("research@calderport-demo.example", before, StringComparison.Ordinal);

        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = new DateTime(2027, 7, 15, 16, 0, 0, DateTimeKind.Utc) });
        var late = $"late-{panelId}@panel.example";
        await AddExpertAsync(staff, panelId, late, invite: true);
        var invitation = Assert.Single(MailsTo(app, late));
        Assert.Contains("Round 1 is open", invitation, StringComparison.Ordinal);
        Assert.Contains("15 July 2027, 16:00 UTC", invitation, StringComparison.Ordinal);
        Assert.Contains("15 July 2027, 17:00 Europe/Lisbon time", invitation, StringComparison.Ordinal);
        Assert.Contains("anonymous", invitation, StringComparison.OrdinalIgnoreCase);
        Assert.Contains("Calderport research desk (research@calderport-demo.example)", invitation, StringComparison.Ordinal);

        // The reminder gives the same deadline in both zones.
        await staff.PostOk($"/api/panels/{panelId}/reminders", new { }, HttpStatusCode.OK);
        var reminder = Assert.Single(MailsTo(app, early), m => m.StartsWith("Reminder", StringComparison.Ordinal));
        Assert.Contains("15 July 2027, 16:00 UTC", reminder, StringComparison.Ordinal);
        Assert.Contains("15 July 2027, 17:00 Europe/Lisbon time", reminder, StringComparison.Ordinal);
        Assert.Contains("research@calderport-demo.example", reminder, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Invitation_NoContactGiven_NamesTheFacilitatorWhoCreatedThePanel()
    {
        var app = await StartAsync();
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var token = await StaffCookieClient.TokenFromAsync(pages, "/Staff/Panels/Create");
        var created = await pages.PostFormAsync("/Staff/Panels/Create", token,
            [new("Input.Title", "Quayside outlook"), new("Input.StartsOn", "2026-11-02"), new("Input.TargetPeriods", "2027-2028"), new("Input.TimeZone", "UTC")]);
        Assert.Equal(HttpStatusCode.Redirect, created.StatusCode);
        var panelId = int.Parse(created.Headers.Location!.OriginalString.Split('/')[^1], System.Globalization.CultureInfo.InvariantCulture);
        var creator = await app.WithDbAsync(db => db.Panels.Where(p => p.Id == panelId).Select(p => p.CreatedBy).SingleAsync());
        var staff = await app.StaffClientAsync();
        var email = $"quay-{panelId}@panel.example";
        await AddExpertAsync(staff, panelId, email, invite: true);

        var invitation = Assert.Single(MailsTo(app, email));
        Assert.Contains($"Test Facilitator ({creator})", invitation, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task CreateOrUpdatePanel_UnknownTimeZoneOrBadContactEmail_Answers400NamingTheField()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        foreach (var (zone, email, field) in new[] { ("Mars/Olympus_Mons", "a@b.example", "timeZone"), ("Europe/Lisbon", "not an address", "contactEmail") })
        {
            var (status, problem) = await staff.Post("/api/panels", new { title = "T", startsOn = "2026-11-02", targetPeriods = "2027", timeZone = zone, contactEmail = email });
            Assert.Equal(HttpStatusCode.BadRequest, status);
            Assert.True(problem!["errors"]!.AsObject().ContainsKey(field), problem.ToJsonString());
        }
        var good = await staff.PostOk("/api/panels", new { title = "T", startsOn = "2026-11-02", targetPeriods = "2027", timeZone = "Europe/Lisbon", contactEmail = "desk@panel.example" });
        Assert.Equal("Europe/Lisbon", (string)good["timeZone"]!);
        Assert.Equal("desk@panel.example", (string)good["contactEmail"]!);
        var r = await staff.PutAsJsonAsync($"/api/panels/{(int)good["id"]!}", new { title = "T", startsOn = "2026-11-02", targetPeriods = "2027", timeZone = "Nowhere/Atlantis" }, Api.Json);
        Assert.Equal(HttpStatusCode.BadRequest, r.StatusCode);
        Assert.Contains("\"timeZone\"", await r.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.Equal("Europe/Lisbon", (string)(await staff.GetOk($"/api/panels/{(int)good["id"]!}"))["timeZone"]!);
    }

    [SkippableFact]
    public async Task DetailsPage_IrreversibleActionsAskFirst_ActionsSayWhatTheyDid_SettingsInWords()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3, open: false);
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var url = $"/Staff/Panels/Details/{p.PanelId}";
        var html = WebUtility.HtmlDecode(await pages.GetStringAsync(url));

        Assert.DoesNotContain("TukeyFences", html, StringComparison.Ordinal);
        Assert.DoesNotContain("weighting Equal", html, StringComparison.Ordinal);
        Assert.Contains("Tukey fences (k = 1.5)", html, StringComparison.Ordinal);
        Assert.Contains("trimmed median, equal weights", html, StringComparison.Ordinal);
        foreach (var handler in new[] { "OpenRound", "RemoveQuestion", "Reissue", "Revoke" })
        {
            var form = Regex.Match(html, "<form[^>]*handler=" + handler + "[^>]*>.*?</form>", RegexOptions.Singleline);
            Assert.True(form.Success, $"No {handler} form.");
            Assert.Matches("data-confirm=\"[^\"]{20,}\"", form.Value);
        }

        var opened = await pages.PostFormAsync(url + "?handler=OpenRound", StaffPages.TokenOf(html),
            [new("ClosesAt", DateTime.UtcNow.AddDays(9).ToString("yyyy-MM-ddTHH:mm", System.Globalization.CultureInfo.InvariantCulture))]);
        Assert.Equal(HttpStatusCode.Redirect, opened.StatusCode);
        html = WebUtility.HtmlDecode(await pages.GetStringAsync(url));
        Assert.Matches("role=\"status\"[^>]*>[^<]*Round 1 is open", html);
        var close = Regex.Match(html, "<form[^>]*handler=CloseRound[^>]*>.*?</form>", RegexOptions.Singleline);
        Assert.Contains("data-confirm=\"Close round 1 now? Experts can no longer answer it; its feedback is frozen.\"", close.Value, StringComparison.Ordinal);

        // The message is shown once.
        Assert.DoesNotContain("id=\"flash\"", await pages.GetStringAsync(url), StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task DetailsPage_LinksIssuedOnOneVisit_StayListedWithNameAndCopyButton_UntilThePageIsLeft()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 2, open: false);
        var staff = p.Staff;
        var newcomers = new List<int>();
        foreach (var name in new[] { "Orla Quay", "Piet Dockside" })
        {
            newcomers.Add((int)(await staff.PostOk("/api/experts", new { name, email = $"{name.Replace(' ', '.')}.{p.PanelId}@panel.example".ToLowerInvariant() }))["id"]!);
        }
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var url = $"/Staff/Panels/Details/{p.PanelId}";
        var token = StaffPages.TokenOf(await pages.GetStringAsync(url));

        var first = await pages.PostFormAsync(url + "?handler=AddMember", token, [new("expertId", newcomers[0].ToString(System.Globalization.CultureInfo.InvariantCulture))]);
        Assert.Equal(HttpStatusCode.Redirect, first.StatusCode);
        Assert.DoesNotContain("/e/", first.Headers.Location!.OriginalString, StringComparison.Ordinal);
        var html = await pages.GetStringAsync(url);
        var second = await pages.PostFormAsync(url + "?handler=AddMember", token, [new("expertId", newcomers[1].ToString(System.Globalization.CultureInfo.InvariantCulture))]);
        Assert.DoesNotContain("/e/", second.Headers.Location!.OriginalString, StringComparison.Ordinal);
        html = WebUtility.HtmlDecode(await pages.GetStringAsync(url));

        var links = IssuedLinks().Matches(html);
        Assert.Equal(2, links.Count);
        Assert.Contains("Orla Quay", html, StringComparison.Ordinal);
        Assert.Contains("Piet Dockside", html, StringComparison.Ordinal);
        foreach (Match link in links)
        {
            Assert.Contains($"data-copy-target=\"{link.Groups[1].Value}\"", html, StringComparison.Ordinal);
            // The link opens the expert's page: it is a real, working link.
            var opened = await app.Client().GetAsync(new Uri(link.Groups[2].Value).PathAndQuery);
            Assert.True(opened.StatusCode is HttpStatusCode.Redirect or HttpStatusCode.OK, $"{(int)opened.StatusCode}");
        }

        // Another visit to the page (not following one of its own actions) no longer shows them.
        html = await pages.GetStringAsync(url);
        Assert.Empty(IssuedLinks().Matches(html));
    }

    [SkippableFact]
    public async Task Conclude_FewAnswersAndNoConsensus_TheReviewSaysSo_AndNothingIsPublishedUntilTicked()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 4, minimumGroupSize: 5);
        var expert = app.Client();
        for (var i = 0; i < 4; i++)
        {
            await p.SubmitAsync(expert, i, 100 + 40 * i);
        }
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var url = $"/Staff/Panels/Details/{p.PanelId}";

        var review = WebUtility.HtmlDecode(await pages.GetStringAsync(url + "?review=conclude"));
        var section = Regex.Match(review, "<section[^>]*id=\"conclude\".*?</section>", RegexOptions.Singleline).Value;
        Assert.Contains("Only 4 answers", section, StringComparison.Ordinal);
        Assert.Contains("minimum group size (5)", section, StringComparison.Ordinal);
        Assert.Contains("not reached", section, StringComparison.Ordinal);
        Assert.Contains("name=\"ConfirmConclusion\"", section, StringComparison.Ordinal);

        var refused = await pages.PostFormAsync(url + "?handler=Conclude", StaffPages.TokenOf(review), []);
        Assert.Equal(HttpStatusCode.OK, refused.StatusCode);
        Assert.Contains("I have read", WebUtility.HtmlDecode(await refused.Content.ReadAsStringAsync()), StringComparison.Ordinal);
        Assert.Equal(PanelState.Running, await app.WithDbAsync(db => db.Panels.Where(x => x.Id == p.PanelId).Select(x => x.State).SingleAsync()));

        var done = await pages.PostFormAsync(url + "?handler=Conclude", StaffPages.TokenOf(review), [new("ConfirmConclusion", "true")]);
        Assert.Equal(HttpStatusCode.Redirect, done.StatusCode);
        var after = WebUtility.HtmlDecode(await pages.GetStringAsync(url));
        Assert.Matches("role=\"status\"[^>]*>[^<]*concluded", after);
        Assert.Contains("fewer answers than the minimum group size", after, StringComparison.Ordinal);
        // On a concluded panel the links read as closed with the panel, never "Active".
        Assert.Contains("Closed with the panel", after, StringComparison.Ordinal);
        Assert.DoesNotMatch(">\\s*(Active|Invited)\\s*<", after);
    }

    [GeneratedRegex("<input[^>]*id=\"(issued-link-[0-9]+)\"[^>]*value=\"([^\"]+/e/[^\"]+)\"")]
    private static partial Regex IssuedLinks();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteFacilitatorScreenTests(SqliteFixture fixture) : FacilitatorScreenTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresFacilitatorScreenTests(PostgresFixture fixture) : FacilitatorScreenTests(fixture);
