using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Pages.Answer;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// The expert's page as an expert meets it: numbers typed and shown in the chosen convention, a
/// refused submission summarised at the top with a link to each field, drafts kept through the
/// expert API, the time left in the round from the app's clock, the panel's contact, labels and
/// explanations for every input, and after the conclusion the published consensus.
/// </summary>
public abstract partial class ExpertPageTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>The page's form for a full answer of the small panel: the Point question's values as given, every range 1 / 2 / 3.</summary>
    private static FormUrlEncodedContent Form(SmallPanel p, string token, string decimals, string[] values, string confidence = "3", (string P10, string P50, string P90)? firstRange = null)
    {
        var fields = new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["Decimals"] = decimals, ["action"] = "submit",
            ["Answers[0].QuestionId"] = p.PointQuestion.ToString(CultureInfo.InvariantCulture), ["Answers[0].Confidence"] = confidence,
            ["Answers[1].QuestionId"] = p.RangeQuestion.ToString(CultureInfo.InvariantCulture),
        };
        for (var i = 0; i < p.Periods.Length; i++)
        {
            fields[$"Answers[0].Periods[{i}].Period"] = fields[$"Answers[1].Periods[{i}].Period"] = p.Periods[i];
            fields[$"Answers[0].Periods[{i}].Value"] = values[i];
            var range = i == 0 && firstRange is { } r ? r : ("1", "2", "3");
            (fields[$"Answers[1].Periods[{i}].P10"], fields[$"Answers[1].Periods[{i}].P50"], fields[$"Answers[1].Periods[{i}].P90"]) = range;
        }
        return new FormUrlEncodedContent(fields);
    }

    private async Task<(TestApp App, SmallPanel Panel, HttpClient Expert)> OpenPanelAsync(int experts = 3)
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, experts);
        return (app, p, await StaffPages.ExpertClientAsync(app, p.Members[0].Token));
    }

    private static string ValueOf(string html, string id) =>
        Regex.Match(html, $"<input id=\"{Regex.Escape(id)}\"[^>]*?\\svalue=\"([^\"]*)\"") is { Success: true } m
            ? System.Net.WebUtility.HtmlDecode(m.Groups[1].Value)
            : throw new InvalidOperationException($"No input {id} on the page.");

    [SkippableTheory]
    [InlineData("comma", "5159,9", "5 159,9")]
    [InlineData("comma", "5 159,9", "5 159,9")]
    [InlineData("point", "5159.9", "5 159.9")]
    public async Task CommaOrPointEntry_SavedExactly_ShownAgainGroupedInTheChosenConvention(string decimals, string typed, string shown)
    {
        var (app, p, client) = await OpenPanelAsync();
        var token = StaffPages.TokenOf(await client.GetStringAsync("/expert"));

        var response = await client.PostAsync("/expert", Form(p, token, decimals, [typed, "2"]));

        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        var stored = await app.WithDbAsync(db => db.Estimates.Where(e => e.QuestionId == p.PointQuestion && e.Period == p.Periods[0]).Select(e => e.Value).SingleAsync());
        Assert.Equal(5159.9, stored);
        var page = await client.GetStringAsync(response.Headers.Location!.OriginalString);
        Assert.Equal(shown, ValueOf(page, IndexModel.FieldId(0, 0, "value")));
    }

    [SkippableFact]
    public async Task RefusedSubmission_SummaryAtTheTop_EachErrorLinksToItsInvalidField()
    {
        var (app, p, client) = await OpenPanelAsync();
        var token = StaffPages.TokenOf(await client.GetStringAsync("/expert"));

        // Three problems: a confidence out of range, a period left empty, a range out of order.
        var response = await client.PostAsync("/expert", Form(p, token, "point", ["1", ""], confidence: "9", firstRange: ("3", "2", "1")));

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        var html = await response.Content.ReadAsStringAsync();
        var summary = Regex.Match(html, "<div class=\"alert alert-danger error-summary\" id=\"error-summary\" role=\"alert\" tabindex=\"-1\"[^>]*>(.*?)</ul>", RegexOptions.Singleline);
        Assert.True(summary.Success, "No error summary on the page.");
        Assert.Contains("There are 3 problems with your answers", summary.Groups[1].Value, StringComparison.Ordinal);
        // The summary comes before the questions.
        Assert.True(summary.Index < html.IndexOf("question-card", StringComparison.Ordinal));
        var targets = Regex.Matches(summary.Groups[1].Value, "<li><a class=\"alert-link\" href=\"#([^\"]+)\">([^<]+)</a></li>").Select(m => (Id: m.Groups[1].Value, Text: m.Groups[2].Value)).ToList();
        Assert.Equal(3, targets.Count);
        Assert.Contains(targets, t => t.Id == IndexModel.FieldId(0, 1, "value") && t.Text == $"Price, {p.Periods[1]}: a value is required.");
        Assert.Contains(targets, t => t.Id == "conf-0");
        Assert.Contains(targets, t => t.Id.StartsWith(IndexModel.FieldId(1, 0, ""), StringComparison.Ordinal));
        foreach (var (id, _) in targets)
        {
            // The field: marked invalid, described by its message, which stands beside it.
            var field = Regex.Match(html, $"<(input|select) id=\"{Regex.Escape(id)}\"[^>]*>|<(select) class=\"[^\"]*\" id=\"{Regex.Escape(id)}\"[^>]*>");
            Assert.True(field.Success, $"No field {id} on the page.");
            Assert.Contains("aria-invalid=\"true\"", field.Value, StringComparison.Ordinal);
            Assert.Matches($"aria-describedby=\"[^\"]*\\b{Regex.Escape(id)}-error\\b", field.Value);
            Assert.Matches($"<div class=\"(invalid-feedback d-block|text-danger small)\" id=\"{Regex.Escape(id)}-error\">[^<]+</div>", html);
        }
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task Draft_SavedThroughTheExpertApiWithTheLinkCookie_ThePageReloadsWithIt()
    {
        var (app, p, client) = await OpenPanelAsync();
        var page = await client.GetStringAsync("/expert");
        // What the page's script needs: the panel's id and the form marked for saving drafts.
        Assert.Matches($"<form [^>]*data-panel-id=\"{p.PanelId}\" data-autosave=\"on\"", page);

        // The script's call: the same origin, the link's cookie, the header that a cross-site form cannot send.
        using var request = new HttpRequestMessage(HttpMethod.Post, $"/api/expert/panels/{p.PanelId}/estimates")
        {
            Content = JsonContent.Create(new
            {
                draft = true,
                answers = new object[]
                {
                    new { questionId = p.PointQuestion, confidence = 4, rationale = "Half done.", periods = new[] { new { period = p.Periods[0], value = 5159.9 } } },
                    new { questionId = p.RangeQuestion, periods = new[] { new { period = p.Periods[1], p10 = 1200.5, p50 = 1300.0 } } },
                },
            }, options: Api.Json),
        };
        request.Headers.Add("X-Requested-With", "fetch");
        var saved = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, saved.StatusCode);
        var receipt = Api.Read<SubmissionReceipt>(await saved.Content.ReadAsStringAsync());
        Assert.True(receipt.Draft);
        Assert.Equal(2, receipt.Saved);

        var reloaded = await client.GetStringAsync("/expert");
        Assert.Equal("5 159.9", ValueOf(reloaded, IndexModel.FieldId(0, 0, "value")));
        Assert.Equal("", ValueOf(reloaded, IndexModel.FieldId(0, 1, "value")));
        Assert.Equal("1 200.5", ValueOf(reloaded, IndexModel.FieldId(1, 1, "p10")));
        Assert.Equal("1 300", ValueOf(reloaded, IndexModel.FieldId(1, 1, "p50")));
        Assert.Equal("", ValueOf(reloaded, IndexModel.FieldId(1, 1, "p90")));
        Assert.Contains(">Half done.</textarea>", reloaded, StringComparison.Ordinal);
        Assert.Contains("<option value=\"4\" selected=\"selected\">", reloaded, StringComparison.Ordinal);
        Assert.Contains("<span class=\"badge text-bg-light border\">draft</span>", reloaded, StringComparison.Ordinal);
        // A draft is not a submission.
        Assert.DoesNotContain("Your last submission", reloaded, StringComparison.Ordinal);
        Assert.True(await app.WithDbAsync(db => db.Estimates.AllAsync(e => e.IsDraft)));
    }

    [SkippableFact]
    public async Task OpenRound_TimeLeftFromTheAppsClock_WithTheDeadlineInUtcAndLocal()
    {
        var app = await StartAsync();
        var clock = app.Clock ?? throw new InvalidOperationException("The shared host has a test clock.");
        var p = await SmallPanel.CreateAsync(app, 3, open: false);
        var closesAt = clock.GetUtcNow().UtcDateTime.Add(new TimeSpan(11, 23, 30, 30));
        closesAt = closesAt.AddTicks(-(closesAt.Ticks % TimeSpan.TicksPerSecond));
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds", new { closesAt });
        var client = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);

        var page = await client.GetStringAsync("/expert");
        Assert.Contains("<strong>Round 1 closes in 11 days 23 hours</strong>", page, StringComparison.Ordinal);
        Assert.Contains($"({closesAt.ToString("MMM d, yyyy, HH:mm", CultureInfo.InvariantCulture)} UTC)", page, StringComparison.Ordinal);
        Assert.Matches($"<time class=\"local\" datetime=\"{Regex.Escape(closesAt.ToString("yyyy-MM-ddTHH:mm:ss", CultureInfo.InvariantCulture))}[^\"]*Z\">", page);

        clock.Advance(new TimeSpan(11, 23, 0, 0));
        Assert.Contains("<strong>Round 1 closes in 30 minutes</strong>", await client.GetStringAsync("/expert"), StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task PanelContact_WhenSet_ShownInThePageHeader()
    {
        var (app, p, client) = await OpenPanelAsync();
        Assert.DoesNotContain("Questions about this panel", await client.GetStringAsync("/expert"), StringComparison.Ordinal);

        await app.WithDbAsync(async db =>
        {
            var panel = await db.Panels.SingleAsync(x => x.Id == p.PanelId);
            panel.ContactName = "Rosa Vell";
            panel.ContactEmail = "rosa.vell@research.example";
            // As every edit of a panel does: a new version (what the expert's requests key their read of the panel by).
            panel.Version = Guid.NewGuid();
            await db.SaveChangesAsync();
        });

        var page = await client.GetStringAsync("/expert");
        var contact = Regex.Match(page, "<p class=\"small mb-2\" id=\"panel-contact\">(.*?)</p>", RegexOptions.Singleline);
        Assert.True(contact.Success && contact.Index < page.IndexOf("id=\"answers-form\"", StringComparison.Ordinal), "No contact in the page's header.");
        var text = Regex.Replace(Regex.Replace(contact.Groups[1].Value, "</?span>", ""), "\\s+", " ").Trim();
        Assert.Equal("Questions about this panel: Rosa Vell (<a href=\"mailto:rosa.vell@research.example\">rosa.vell@research.example</a>)", text);
    }

    [SkippableFact]
    public async Task EveryAnswerInput_HasItsOwnLabel_AndTheAnswerFormatIsExplained()
    {
        var (_, p, client) = await OpenPanelAsync();
        var page = await client.GetStringAsync("/expert");

        var inputs = Regex.Matches(page, "<input id=\"([^\"]+)\" class=\"form-control answer-input").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal(p.Periods.Length * 4, inputs.Count);
        var expected = p.Periods.SelectMany((period, pi) => new[]
        {
            (IndexModel.FieldId(0, pi, "value"), $"{period}, Your answer (EUR/m²)"),
            (IndexModel.FieldId(1, pi, "P10"), $"{period}, P10 (EUR/m²)"),
            (IndexModel.FieldId(1, pi, "P50"), $"{period}, P50 (EUR/m²)"),
            (IndexModel.FieldId(1, pi, "P90"), $"{period}, P90 (EUR/m²)"),
        }).ToList();
        Assert.Equal(expected.Select(e => e.Item1).Order(StringComparer.Ordinal), inputs.Order(StringComparer.Ordinal));
        foreach (var (id, name) in expected)
        {
            var labels = Regex.Matches(page, $"<label [^>]*for=\"{Regex.Escape(id)}\">(.*?)</label>", RegexOptions.Singleline);
            var label = Assert.Single(labels);
            Assert.Equal(name, System.Net.WebUtility.HtmlDecode(Regex.Replace(label.Groups[1].Value, "<[^>]+>", "")));
        }
        var text = System.Net.WebUtility.HtmlDecode(page);
        Assert.Contains("P10: a value you would be surprised to see the outcome fall below – one time in ten. P50: your central estimate, as likely above as below. "
            + "P90: a value you would be surprised to see the outcome rise above – one time in ten.", text, StringComparison.Ordinal);
        Assert.Contains("Your answer is your central estimate: the outcome as likely to be above it as below.", text, StringComparison.Ordinal);
    }

    /// <summary>
    /// Eight experts answer 100, 104, ..., 128 (a range of ±1 around it). Expected by hand, with the
    /// sample quantiles of Hyndman &amp; Fan (1996) type 7 (R's default <c>quantile()</c>): the median
    /// (112 + 116) / 2 = 114; Q1 at h = 7 × 0.25 + 1 = 2.75, 104 + 0.75 × 4 = 107; Q3 at h = 6.25,
    /// 120 + 0.25 × 4 = 121; Tukey's fences (Q1 − 1.5 IQR = 86, Q3 + 1.5 IQR = 142) set nothing aside.
    /// The Range question's quantile average of symmetric answers: P10 113, P50 114, P90 115.
    /// </summary>
    [SkippableFact]
    public async Task ConcludedPanel_ExpertSeesThePublishedConsensusBesideTheirFinalAnswer()
    {
        var (app, p, client) = await OpenPanelAsync(experts: 8);
        var api = p.Staff;
        for (var i = 0; i < 8; i++)
        {
            await p.SubmitAsync(app.Client(), i, 100 + (4 * i));
        }
        await api.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await api.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);

        var page = await client.GetStringAsync("/expert");
        Assert.Contains("<a href=\"#consensus\" class=\"alert-link\">See the published consensus.</a>", page, StringComparison.Ordinal);
        var rows = ConsensusRows(page);
        foreach (var period in p.Periods)
        {
            Assert.Contains(("Price", period, "114", "107 – 121", "100"), rows);
            Assert.Contains(("Rent band", period, "114", "113 – 115", "P10 99 P50 100 P90 101"), rows);
        }
        Assert.Equal(2 * p.Periods.Length, rows.Count);
    }

    [SkippableFact]
    public async Task ConcludedPanel_TooFewAnswersForTheGroupSizeOrTheSpread_NumbersWithheld()
    {
        var app = await StartAsync();
        // Four members and a minimum group size of four: three answers are too few to show anything.
        var small = await SmallPanel.CreateAsync(app, 4, minimumGroupSize: 4);
        // Three members, the minimum of three: the consensus is shown, its band (of three answers) not.
        var three = await SmallPanel.CreateAsync(app, 3);
        foreach (var panel in new[] { small, three })
        {
            var values = new[] { 100.0, 110, 130 };
            for (var i = 0; i < 3; i++)
            {
                await panel.SubmitAsync(app.Client(), i, values[i]);
            }
            await panel.Staff.PostOk($"/api/panels/{panel.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
            await panel.Staff.PostOk($"/api/panels/{panel.PanelId}/conclude", new { }, HttpStatusCode.OK);
        }

        var withheld = ConsensusRows(await (await StaffPages.ExpertClientAsync(app, small.Members[0].Token)).GetStringAsync("/expert"));
        Assert.Equal(2 * small.Periods.Length, withheld.Count);
        Assert.All(withheld, r => Assert.Equal(("not shown: fewer than 4 answers", ""), (r.Value, r.Band)));

        // Median of 100, 110, 130 = 110; the quartiles 105 and 120 (type 7) would give the other two answers away.
        var shown = ConsensusRows(await (await StaffPages.ExpertClientAsync(app, three.Members[0].Token)).GetStringAsync("/expert"));
        Assert.Contains(shown, r => r.Question == "Price" && r.Value == "110" && r.Band == "shown from 8 answers" && r.Own == "100");
        Assert.All(shown, r => Assert.Equal("shown from 8 answers", r.Band));
    }

    /// <summary>The consensus section's rows: question label, period, value, band, own final answer (tags removed, spaces collapsed).</summary>
    private static List<(string Question, string Period, string Value, string Band, string Own)> ConsensusRows(string html)
    {
        var start = html.IndexOf("<section class=\"mb-4 consensus-section\" id=\"consensus\"", StringComparison.Ordinal);
        Assert.True(start >= 0, "No consensus section on the page.");
        var section = html[start..html.IndexOf("</section>", start, StringComparison.Ordinal)];
        var rows = new List<(string, string, string, string, string)>();
        foreach (Match q in Regex.Matches(section, "<h3[^>]*>(.*?)<span.*?</h3>(.*?)</table>", RegexOptions.Singleline))
        {
            var label = System.Net.WebUtility.HtmlDecode(q.Groups[1].Value.Trim());
            foreach (Match row in Regex.Matches(q.Groups[2].Value, "<tr>\\s*<th scope=\"row\">([^<]+)</th>(.*?)</tr>", RegexOptions.Singleline))
            {
                var cells = Regex.Matches(row.Groups[2].Value, "<td[^>]*>(.*?)</td>", RegexOptions.Singleline)
                    .Select(c => Regex.Replace(System.Net.WebUtility.HtmlDecode(Regex.Replace(c.Groups[1].Value, "<[^>]+>", "")).Replace('\u202F', ' '), "\\s+", " ").Trim()).ToList();
                rows.Add(cells.Count == 3
                    ? (label, row.Groups[1].Value, cells[0], cells[1], cells[2])
                    : (label, row.Groups[1].Value, cells[0], "", cells[1]));
            }
        }
        return rows;
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteExpertPageTests(SqliteFixture fixture) : ExpertPageTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresExpertPageTests(PostgresFixture fixture) : ExpertPageTests(fixture);

/// <summary>The page's pure rules: how a number is written into a field, and how the time left is said.</summary>
public sealed class ExpertPageTextTests
{
    [Theory]
    [InlineData(5159.9, DecimalSeparator.Point, "5 159.9")]
    [InlineData(5159.9, DecimalSeparator.Comma, "5 159,9")]
    [InlineData(-1234567.891, DecimalSeparator.Point, "-1 234 567.891")]
    [InlineData(100, DecimalSeparator.Comma, "100")]
    [InlineData(0.05, DecimalSeparator.Comma, "0,05")]
    [InlineData(999999, DecimalSeparator.Point, "999 999")]
    public void TypedText_Value_GroupedWithTheChosenMark(double value, DecimalSeparator separator, string expected) =>
        Assert.Equal(expected, IndexModel.TypedText(value, separator));

    /// <summary>What the page writes into a field, the page's reading rule takes back as the same number, in both conventions.</summary>
    [Fact]
    public void TypedText_ReadBackByTheEntryRule_SameNumber()
    {
        var random = new Random(20261214);
        var values = Enumerable.Range(0, 2000).Select(_ => Math.Round((random.NextDouble() - 0.3) * Math.Pow(10, random.Next(0, 11)), random.Next(0, 6)))
            .Concat([0, 1e12, -1e12, 0.1, 12345678.9]).ToList();
        foreach (var separator in new[] { DecimalSeparator.Point, DecimalSeparator.Comma })
        {
            foreach (var v in values)
            {
                var text = IndexModel.TypedText(v, separator);
                var reading = Numbers.TryParseEntry(text, separator);
                Assert.True(reading.IsValid && reading.Value == v, $"{v.ToString("R", CultureInfo.InvariantCulture)} written as '{text}' reads as {reading.Value} ({reading.Error})");
            }
        }
    }

    [Theory]
    [InlineData(11, 23, 30, 30, "11 days 23 hours")]
    [InlineData(1, 0, 59, 0, "1 day")]
    [InlineData(2, 1, 0, 0, "2 days 1 hour")]
    [InlineData(0, 5, 12, 59, "5 hours 12 minutes")]
    [InlineData(0, 1, 0, 30, "1 hour")]
    [InlineData(0, 0, 40, 59, "40 minutes")]
    [InlineData(0, 0, 1, 0, "1 minute")]
    [InlineData(0, 0, 0, 59, "less than a minute")]
    [InlineData(0, 0, 0, 0, "no time")]
    public void TimeLeftText_Duration_TwoLargestUnitsRoundedDown(int days, int hours, int minutes, int seconds, string expected) =>
        Assert.Equal(expected, TimeLeftText.Describe(new TimeSpan(days, hours, minutes, seconds)));
}
