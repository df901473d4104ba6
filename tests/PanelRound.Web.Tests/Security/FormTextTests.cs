using System.Net;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// A NUL character (U+0000) is not text: PostgreSQL cannot store it in a text column. A page's form
/// that carries one (a browser never sends it; a crafted request can) is refused with 400 and a
/// ProblemDetails, on both providers, before anything is stored; never a 500. The framework's form
/// reader refuses the whole form, so the field is not named (the JSON API names it: StrictNumbers).
/// </summary>
public abstract class FormTextTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task StaffForm_TitleWithNul_Answers400_NothingStored()
    {
        var app = await StartAsync();
        var pages = await StaffPages.SignedInClientAsync(app, Roles.Facilitator);
        var token = await StaffCookieClient.TokenFromAsync(pages, "/Staff/Panels/Create");
        var before = await app.WithDbAsync(db => db.Panels.CountAsync());

        var response = await pages.PostFormAsync("/Staff/Panels/Create", token,
            [new("Input.Title", "Quayside\0outlook"), new("Input.StartsOn", "2026-11-02"), new("Input.TargetPeriods", "2027-2028"), new("Input.TimeZone", "UTC")]);

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        Assert.Equal(400, (int)JsonNode.Parse(await response.Content.ReadAsStringAsync())!["status"]!);
        Assert.Equal(before, await app.WithDbAsync(db => db.Panels.CountAsync()));
    }

    [SkippableFact]
    public async Task ExpertForm_RationaleWithNul_Answers400_NothingStored()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        var token = StaffPages.TokenOf(await expert.GetStringAsync("/expert"));

        var response = await expert.PostAsync("/expert", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["Decimals"] = "point", ["action"] = "submit",
            ["Answers[0].QuestionId"] = p.PointQuestion.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["Answers[0].Rationale"] = "Supply\0is short", ["Answers[0].Periods[0].Period"] = p.Periods[0], ["Answers[0].Periods[0].Value"] = "4000",
        }));

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync(e => e.MembershipId == p.Members[0].MembershipId)));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteFormTextTests(SqliteFixture fixture) : FormTextTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresFormTextTests(PostgresFixture fixture) : FormTextTests(fixture);
