using System.Net;
using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// The expert submission's optional <c>Idempotency-Key</c> header (and the expert page's form key): a
/// client that retries after a timeout or a crash adds no second revision and gets the first receipt back.
/// </summary>
public abstract class IdempotentSubmissionTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private const string Header = "Idempotency-Key";

    private static async Task<(HttpStatusCode Status, JsonNode? Body)> SendAsync(HttpClient expert, SmallPanel p, object body, params string[] keys)
    {
        using var request = new HttpRequestMessage(HttpMethod.Post, $"/api/expert/panels/{p.PanelId}/estimates") { Content = JsonContent.Create(body) };
        foreach (var key in keys)
        {
            request.Headers.TryAddWithoutValidation(Header, key);
        }
        using var response = await expert.SendAsync(request);
        var text = await response.Content.ReadAsStringAsync();
        return (response.StatusCode, text.Length == 0 ? null : JsonNode.Parse(text));
    }

    private static Task<int> RowsAsync(TestApp app) => app.WithDbAsync(db => db.Estimates.CountAsync());

    [SkippableFact]
    public async Task SameKeyTwice_AddsOneRevision_ReturnsTheFirstReceipt_OtherAnswersUnderTheKeyAre400()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        var perSubmission = p.Periods.Length * 2;

        var first = await SendAsync(expert, p, p.Submission(100), "retry-1");
        Assert.Equal(HttpStatusCode.OK, first.Status);
        Assert.False((bool)first.Body!["replayed"]!);
        Assert.Equal(perSubmission, await RowsAsync(app));

        app.Clock!.Advance(TimeSpan.FromMinutes(1));
        var retry = await SendAsync(expert, p, p.Submission(100), "retry-1");
        Assert.Equal(HttpStatusCode.OK, retry.Status);
        Assert.True((bool)retry.Body!["replayed"]!);
        Assert.Equal((string)first.Body["at"]!, (string)retry.Body["at"]!);
        Assert.Equal((int)first.Body["saved"]!, (int)retry.Body["saved"]!);
        Assert.Equal(perSubmission, await RowsAsync(app));

        // The same key with other answers is bad input, named by the header; nothing is stored.
        var reused = await SendAsync(expert, p, p.Submission(120), "retry-1");
        Assert.Equal(HttpStatusCode.BadRequest, reused.Status);
        Assert.NotNull(reused.Body!["errors"]![Header]);
        Assert.Equal(perSubmission, await RowsAsync(app));

        // A new key, and no key at all, each add a revision; keys belong to one expert only.
        Assert.Equal(HttpStatusCode.OK, (await SendAsync(expert, p, p.Submission(120), "retry-2")).Status);
        Assert.Equal(HttpStatusCode.OK, (await SendAsync(expert, p, p.Submission(120))).Status);
        var other = app.Client().WithExpertToken(p.Members[1].Token);
        var otherFirst = await SendAsync(other, p, p.Submission(100), "retry-1");
        Assert.Equal(HttpStatusCode.OK, otherFirst.Status);
        Assert.False((bool)otherFirst.Body!["replayed"]!);
        Assert.Equal(4 * perSubmission, await RowsAsync(app));
    }

    [SkippableFact]
    public async Task ConcurrentRetriesWithOneKey_StoreOneRevision_AndAllGetItsReceipt()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client().WithExpertToken(p.Members[0].Token);

        var results = await Task.WhenAll(Enumerable.Range(0, 8).Select(_ => SendAsync(expert, p, p.Submission(100), "burst")));

        Assert.All(results, r => Assert.Equal(HttpStatusCode.OK, r.Status));
        Assert.Single(results, r => !(bool)r.Body!["replayed"]!);
        Assert.Single(results.Select(r => (string)r.Body!["at"]!).Distinct());
        Assert.Equal(p.Periods.Length * 2, await RowsAsync(app));
        Assert.Equal(1, await app.WithDbAsync(db => db.SubmissionKeys.CountAsync()));
    }

    [SkippableFact]
    public async Task RetryAfterTheRoundClosed_GetsTheAcknowledgedReceipt_ANewSubmissionIs409()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        var first = await SendAsync(expert, p, p.Submission(100), "before-close");
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);

        var retry = await SendAsync(expert, p, p.Submission(100), "before-close");
        Assert.Equal(HttpStatusCode.OK, retry.Status);
        Assert.True((bool)retry.Body!["replayed"]!);
        Assert.Equal((string)first.Body!["at"]!, (string)retry.Body["at"]!);
        Assert.Equal(HttpStatusCode.Conflict, (await SendAsync(expert, p, p.Submission(100), "after-close")).Status);
    }

    [SkippableTheory]
    [InlineData("del\u007f")]
    [InlineData("tab\tinside")]
    [InlineData("caf\u00e9")]
    [InlineData("k", "k")]
    public async Task MalformedKey_Is400NamingTheHeader_NothingStored(params string[] keys)
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client().WithExpertToken(p.Members[0].Token);

        var (status, body) = await SendAsync(expert, p, p.Submission(100), keys);

        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.NotNull(body!["errors"]![Header]);
        Assert.Equal(0, await RowsAsync(app));
    }

    [SkippableFact]
    public async Task OverlongKey_Is400NamingTheHeader()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var (status, body) = await SendAsync(app.Client().WithExpertToken(p.Members[0].Token), p, p.Submission(100), new string('k', 256));
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.NotNull(body!["errors"]![Header]);
    }

    [SkippableFact]
    public async Task ExpertPage_TheSameFormSentTwice_StoresOneRevision()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var client = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        var page = await client.GetStringAsync("/expert");
        var formKey = System.Text.RegularExpressions.Regex.Match(page, "name=\"FormKey\" value=\"([^\"]+)\"").Groups[1].Value;
        Assert.StartsWith("form-", formKey, StringComparison.Ordinal);
        var fields = new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = StaffPages.TokenOf(page), ["Decimals"] = "point", ["action"] = "submit", ["FormKey"] = formKey,
            ["Answers[0].QuestionId"] = p.PointQuestion.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["Answers[1].QuestionId"] = p.RangeQuestion.ToString(System.Globalization.CultureInfo.InvariantCulture),
        };
        for (var i = 0; i < p.Periods.Length; i++)
        {
            fields[$"Answers[0].Periods[{i}].Period"] = fields[$"Answers[1].Periods[{i}].Period"] = p.Periods[i];
            fields[$"Answers[0].Periods[{i}].Value"] = "5";
            (fields[$"Answers[1].Periods[{i}].P10"], fields[$"Answers[1].Periods[{i}].P50"], fields[$"Answers[1].Periods[{i}].P90"]) = ("1", "2", "3");
        }

        var sent = await client.PostAsync("/expert", new FormUrlEncodedContent(fields));
        var resent = await client.PostAsync("/expert", new FormUrlEncodedContent(fields));

        Assert.Equal(HttpStatusCode.Redirect, sent.StatusCode);
        Assert.Equal(HttpStatusCode.Redirect, resent.StatusCode);
        Assert.Equal(p.Periods.Length * 2, await RowsAsync(app));

        // The same form key with other answers (a page restored from the history) stores nothing and says why.
        fields["Answers[0].Periods[0].Value"] = "6";
        var changed = await client.PostAsync("/expert", new FormUrlEncodedContent(fields));
        Assert.Equal(HttpStatusCode.OK, changed.StatusCode);
        Assert.Contains("This form had already been sent with other answers.", await changed.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.Equal(p.Periods.Length * 2, await RowsAsync(app));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteIdempotentSubmissionTests(SqliteFixture f) : IdempotentSubmissionTests(f);

[Collection(PostgresCollection.Name)]
public sealed class PostgresIdempotentSubmissionTests(PostgresFixture f) : IdempotentSubmissionTests(f);
