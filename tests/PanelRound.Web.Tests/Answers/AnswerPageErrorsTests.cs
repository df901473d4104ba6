using System.Net;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// The expert's page puts every refusal beside its field: a value the form cannot read, an error of
/// the submission's rules, and a refusal of the whole submission (the round closed), and saves nothing.
/// </summary>
public abstract class AnswerPageErrorsTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>The page's form for a full answer: every period of the Point question 1 (the second as given), every range 1 / 2 / 3.</summary>
    private static FormUrlEncodedContent Form(SmallPanel p, string token, string confidence, string secondValue)
    {
        var fields = new Dictionary<string, string>
        {
            ["__RequestVerificationToken"] = token, ["Decimals"] = "point", ["action"] = "submit",
            ["Answers[0].QuestionId"] = p.PointQuestion.ToString(), ["Answers[0].Confidence"] = confidence,
            ["Answers[1].QuestionId"] = p.RangeQuestion.ToString(),
        };
        for (var i = 0; i < p.Periods.Length; i++)
        {
            fields[$"Answers[0].Periods[{i}].Period"] = fields[$"Answers[1].Periods[{i}].Period"] = p.Periods[i];
            fields[$"Answers[0].Periods[{i}].Value"] = i == 1 ? secondValue : "1";
            (fields[$"Answers[1].Periods[{i}].P10"], fields[$"Answers[1].Periods[{i}].P50"], fields[$"Answers[1].Periods[{i}].P90"]) = ("1", "2", "3");
        }
        return new FormUrlEncodedContent(fields);
    }

    /// <summary>A panel with round 1 open, and the first expert's signed-in page with its antiforgery token.</summary>
    private async Task<(TestApp App, SmallPanel Panel, HttpClient Expert, string Token)> OpenExpertPageAsync()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var client = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        return (app, p, client, StaffPages.TokenOf(await client.GetStringAsync("/expert")));
    }

    [SkippableFact]
    public async Task ExpertPage_UnreadableAndRefusedFields_ErrorsBesideTheFieldsNothingStored()
    {
        var (app, p, client, token) = await OpenExpertPageAsync();

        // A confidence the form cannot bind is not sent to the submission rules.
        var unreadable = await client.PostAsync("/expert", Form(p, token, "high", "2"));
        Assert.Equal(HttpStatusCode.OK, unreadable.StatusCode);
        Assert.Contains("<div class=\"text-danger small\" id=\"conf-0-error\">Not a valid choice.</div>", await unreadable.Content.ReadAsStringAsync(), StringComparison.Ordinal);

        // The submission's own rules: confidence out of range, a period left empty.
        var refused = await client.PostAsync("/expert", Form(p, token, "9", ""));
        Assert.Equal(HttpStatusCode.OK, refused.StatusCode);
        var html = await refused.Content.ReadAsStringAsync();
        Assert.Contains("<div class=\"text-danger small\" id=\"conf-0-error\">Confidence is 1 (low) to 5 (high).</div>", html, StringComparison.Ordinal);
        Assert.Contains($"<div class=\"invalid-feedback d-block\" id=\"a0-p1-value-error\">{p.Periods[1]}: a value is required.</div>", html, StringComparison.Ordinal);
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task ExpertPage_RoundClosedMeanwhile_RefusalShownNothingStored()
    {
        var (app, p, client, token) = await OpenExpertPageAsync();
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);

        var response = await client.PostAsync("/expert", Form(p, token, "3", "2"));
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Contains("<div class=\"alert alert-danger\">Round 1 closed on ", await response.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteAnswerPageErrorsTests(SqliteFixture fixture) : AnswerPageErrorsTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresAnswerPageErrorsTests(PostgresFixture fixture) : AnswerPageErrorsTests(fixture);
