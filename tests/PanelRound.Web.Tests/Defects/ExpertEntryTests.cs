using System.Net;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// Numbers on the expert's page are read by an explicit rule, never changed silently (a comma
/// typed with the decimal point chosen is refused, not read as a thousands separator), and
/// concurrent revisions store times in the order that decides which one counts.
/// </summary>
public abstract class ExpertEntryTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static FormUrlEncodedContent Form(SmallPanel p, string token, string decimals, string value) => new(new Dictionary<string, string>
    {
        ["__RequestVerificationToken"] = token,
        ["Decimals"] = decimals,
        ["action"] = "submit",
        ["Answers[0].QuestionId"] = p.PointQuestion.ToString(),
        ["Answers[0].Periods[0].Period"] = p.Periods[0],
        ["Answers[0].Periods[0].Value"] = value,
        ["Answers[0].Periods[1].Period"] = p.Periods[1],
        ["Answers[0].Periods[1].Value"] = "2",
        ["Answers[1].QuestionId"] = p.RangeQuestion.ToString(),
        ["Answers[1].Periods[0].Period"] = p.Periods[0],
        ["Answers[1].Periods[0].P10"] = "1",
        ["Answers[1].Periods[0].P50"] = "2",
        ["Answers[1].Periods[0].P90"] = "3",
        ["Answers[1].Periods[1].Period"] = p.Periods[1],
        ["Answers[1].Periods[1].P10"] = "1",
        ["Answers[1].Periods[1].P50"] = "2",
        ["Answers[1].Periods[1].P90"] = "3",
    });

    [SkippableFact]
    public async Task ExpertPage_CommaWithDecimalPoint_RefusedBesideTheFieldNothingStored()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var client = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        var token = StaffPages.TokenOf(await client.GetStringAsync("/expert"));
        var response = await client.PostAsync("/expert", Form(p, token, "point", "1,5"));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var html = await response.Content.ReadAsStringAsync();
        Assert.Contains("contains &#x27;,&#x27;", html, StringComparison.Ordinal);
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableTheory]
    [InlineData("comma", "1,5", 1.5)]
    [InlineData("comma", "1 234,5", 1234.5)]
    [InlineData("point", "1234.5", 1234.5)]
    [InlineData("point", "1 234.5", 1234.5)]
    public async Task ExpertPage_NumberWithChosenSeparator_StoredAsTyped(string decimals, string typed, double stored)
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var client = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        var token = StaffPages.TokenOf(await client.GetStringAsync("/expert"));
        var response = await client.PostAsync("/expert", Form(p, token, decimals, typed));
        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        var value = await app.WithDbAsync(db => db.Estimates.Where(e => e.QuestionId == p.PointQuestion && e.Period == p.Periods[0]).Select(e => e.Value).SingleAsync());
        Assert.Equal(stored, value);
    }

    /// <summary>Fifty revisions of one expert at once: the revision that counts (the latest row) carries the latest time, and times follow the rows' order.</summary>
    [SkippableFact]
    public async Task ConcurrentRevisions_CountedRevisionHasTheLatestTime()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var clients = Enumerable.Range(0, 50).Select(_ => app.Client().WithExpertToken(p.Members[0].Token)).ToList();
        var responses = await Task.WhenAll(clients.Select((c, i) => c.Post($"/api/expert/panels/{p.PanelId}/estimates", p.Submission(100 + i))));
        Assert.All(responses, r => Assert.Equal(HttpStatusCode.OK, r.Status));
        var rows = await app.WithDbAsync(db => db.Estimates.AsNoTracking()
            .Where(e => e.QuestionId == p.PointQuestion && e.Period == p.Periods[0]).OrderBy(e => e.Id).Select(e => new { e.Id, e.CreatedAt }).ToListAsync());
        Assert.Equal(50, rows.Count);
        var inversions = rows.Zip(rows.Skip(1)).Count(pair => pair.Second.CreatedAt < pair.First.CreatedAt);
        Assert.Equal(0, inversions);
        var form = await clients[0].GetOk($"/api/expert/panels/{p.PanelId}");
        Assert.Equal(rows[^1].CreatedAt, ((DateTime)form["lastSubmittedAt"]!).ToUniversalTime());
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteExpertEntryTests(SqliteFixture fixture) : ExpertEntryTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresExpertEntryTests(PostgresFixture fixture) : ExpertEntryTests(fixture);
