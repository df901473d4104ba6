using System.Globalization;
using System.Net;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Benchmarks;

/// <summary>Relations between three questions (rent = capital value × yield) through the API and the pages.</summary>
public abstract partial class RelationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    // Per expert: rent (EUR/m²/year), capital value (EUR/m²), yield (%). A-D are consistent (rent = value × yield / 100);
    // E's answers imply a yield of 600 / 5000 = 12%, outside the yield question's plausible range of 3-8%.
    private static readonly (string Name, double Rent, double Value, double Yield)[] Answers =
    [
        ("A", 250, 5000, 5.0), ("B", 264, 4800, 5.5), ("C", 240, 4800, 5.0), ("D", 270, 4500, 6.0), ("E", 600, 5000, 5.0),
    ];

    private sealed record Setup(TestApp App, HttpClient Staff, int PanelId, int Rent, int Value, int Yield, Dictionary<string, string> Tokens);

    private static async Task<Setup> PanelAsync(TestApp app, bool askYield = true)
    {
        var staff = await app.StaffClientAsync();
        async Task<int> Indicator(string key, string unit, double start)
        {
            var id = (int)(await staff.PostOk("/api/indicators", new { key, name = key, unitLabel = unit, decimals = 2 }))["id"]!;
            await staff.PostOk($"/api/indicators/{id}/observations",
                Enumerable.Range(2016, 9).Select(y => new { period = y.ToString(Inv), value = start * (1 + (0.02 * (y - 2016))), source = "test" }).ToArray(), HttpStatusCode.OK);
            return id;
        }
        var rentIndicator = await Indicator("rel-rent", "EUR/m²/year", 240);
        var valueIndicator = await Indicator("rel-value", "EUR/m²", 4600);
        var yieldIndicator = await Indicator("rel-yield", "%", 5.2);
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Offices", startsOn = "2025-06-01", targetPeriods = "2026" }))["id"]!;
        var rent = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = rentIndicator, label = "Prime rent", format = "Point" }))["id"]!;
        var value = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = valueIndicator, label = "Capital value", format = "Point" }))["id"]!;
        var yield = askYield
            ? (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = yieldIndicator, label = "Prime yield", format = "Point", plausibleMin = 3.0, plausibleMax = 8.0 }))["id"]!
            : 0;
        var tokens = new Dictionary<string, string>();
        foreach (var a in Answers)
        {
            var e = (int)(await staff.PostOk("/api/experts", new { name = "Rel " + a.Name, email = $"rel{a.Name}@panel.example" }))["id"]!;
            tokens[a.Name] = (string)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = e, sendInvitation = false }))["token"]!;
        }
        return new Setup(app, staff, panelId, rent, value, yield, tokens);
    }

    private static async Task AnswerRoundAsync(Setup s)
    {
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        foreach (var a in Answers)
        {
            var answers = new List<object>
            {
                new { questionId = s.Rent, periods = new[] { new { period = "2026", value = a.Rent } } },
                new { questionId = s.Value, periods = new[] { new { period = "2026", value = a.Value } } },
            };
            if (s.Yield != 0)
            {
                answers.Add(new { questionId = s.Yield, rationale = a.Name == "E" ? "strong demand" : null, periods = new[] { new { period = "2026", value = a.Yield } } });
            }
            await s.App.Client().WithExpertToken(s.Tokens[a.Name]).PostOk($"/api/expert/panels/{s.PanelId}/estimates", new { draft = false, answers }, HttpStatusCode.OK);
        }
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
    }

    [SkippableFact]
    public async Task DeclaredRelation_BadInputIs400NamingTheField_ConsensusCheckEqualsRecomputation_AndCodesAreFlagged()
    {
        var app = await StartAsync();
        var s = await PanelAsync(app);
        var other = (int)(await s.Staff.PostOk("/api/panels", new { title = "Other", startsOn = "2025-06-01", targetPeriods = "2026" }))["id"]!;

        foreach (var (body, field) in new (object, string)[]
        {
            (new { shape = "Times", result = new { questionId = s.Rent }, first = new { questionId = s.Value }, second = new { questionId = s.Yield, factor = 0.01 } }, "shape"),
            (new { shape = "Product", result = new { questionId = s.Rent, factor = -1.0 }, first = new { questionId = s.Value }, second = new { questionId = s.Yield } }, "result.factor"),
            (new { shape = "Product", result = new { questionId = s.Rent }, first = new { questionId = 999999 }, second = new { questionId = s.Yield } }, "first.questionId"),
            (new { shape = "Product", result = new { questionId = s.Rent }, first = new { questionId = s.Rent }, second = new { questionId = s.Yield } }, "first.questionId"),
            (new { shape = "Sum", result = new { questionId = s.Rent }, first = new { label = "x" }, second = new { label = "y" } }, "result.questionId"),
        })
        {
            var (status, problem) = await s.Staff.Post($"/api/panels/{s.PanelId}/relations", body);
            Assert.Equal(HttpStatusCode.BadRequest, status);
            Assert.NotNull(problem!["errors"]![field]);
        }
        Assert.Empty((await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations")).AsArray());
        Assert.Equal(HttpStatusCode.NotFound, (await s.Staff.Post($"/api/panels/{other + 1000}/relations", new { shape = "Product" })).Status);

        var declared = await s.Staff.PostOk($"/api/panels/{s.PanelId}/relations", new
        {
            shape = "Product",
            result = new { questionId = s.Rent },
            first = new { questionId = s.Value },
            second = new { questionId = s.Yield, factor = 0.01 },
        });
        Assert.Equal("Prime rent [EUR/m²/year] = Capital value [EUR/m²] × 0.01 × Prime yield [%]", (string)declared["formula"]!);
        await AnswerRoundAsync(s);

        // The consensus of a running panel is the last closed round's trimmed median (Tukey fences drop E's rent of 600).
        var check = await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations/check");
        var period = check["consensus"]![0]!["periods"]![0]!;
        var results = await s.Staff.GetOk($"/api/panels/{s.PanelId}/results");
        double Trimmed(int q) => (double)results["questions"]!.AsArray().Single(x => (int)x!["questionId"]! == q)!["periods"]![0]!["rounds"]![0]!["feedback"]!["headline"]!["trimmedMedian"]!;
        var implied = Trimmed(s.Value) * Trimmed(s.Yield) / 100;
        Assert.Equal(Trimmed(s.Rent), (double)period["result"]!, 9);
        Assert.Equal(implied, (double)period["impliedResult"]!, 9);
        Assert.Equal((Trimmed(s.Rent) - implied) / implied, (double)period["relativeDifference"]!, 9);
        Assert.Equal(Math.Abs((Trimmed(s.Rent) - implied) / implied) > 0.05, (bool)period["flagged"]!);

        // By panel code: only E's own answers disagree (600 against 5000 × 5% = 250).
        var codes = check["byPanelCode"]![0]!["codes"]!.AsArray();
        Assert.Equal(5, codes.Count);
        var flagged = codes.Where(c => c!["periods"]!.AsArray().Any(p => (bool)p!["flagged"]!)).ToList();
        var e = Assert.Single(flagged)!;
        Assert.Equal(1.4, (double)e["periods"]![0]!["relativeDifference"]!, 9);

        // The results page shows the check.
        var pages = await StaffPages.SignedInClientAsync(app, "Facilitator");
        var html = await pages.GetStringAsync($"/staff/panels/results/{s.PanelId}");
        Assert.Contains("id=\"relations\"", html, StringComparison.Ordinal);
        Assert.Contains((string)e["panelCode"]!, html, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task PrivateNote_InRound2_ShowsTheExpertsOwnFiguresOnly_AndNoOtherExpertSeesIt()
    {
        var app = await StartAsync();
        var s = await PanelAsync(app);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/relations", new
        {
            shape = "Product", result = new { questionId = s.Rent }, first = new { questionId = s.Value }, second = new { questionId = s.Yield, factor = 0.01 },
        });
        await AnswerRoundAsync(s);

        // Round 1 is closed but no later round is open: no note yet.
        var eClient = await StaffPages.ExpertClientAsync(app, s.Tokens["E"]);
        Assert.DoesNotContain("private-note", await eClient.GetStringAsync("/expert"), StringComparison.Ordinal);

        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var page = await eClient.GetStringAsync("/expert");
        var note = NoteOf(page);
        Assert.NotNull(note);
        // E's own figures: rent 600 and value 5,000 imply a yield of 12.00%, outside 3.00 to 8.00.
        Assert.Contains("600", note, StringComparison.Ordinal);
        Assert.Contains("5,000", note, StringComparison.Ordinal);
        Assert.Contains("12.00", note, StringComparison.Ordinal);
        // Nothing of anyone else's: none of the other experts' distinct figures.
        foreach (var figure in new[] { "264", "270", "4,800", "4,500", "5.5", "6.0" })
        {
            Assert.DoesNotContain(figure, note, StringComparison.Ordinal);
        }

        foreach (var name in new[] { "A", "B", "C", "D" })
        {
            var other = await StaffPages.ExpertClientAsync(app, s.Tokens[name]);
            var otherPage = await other.GetStringAsync("/expert");
            Assert.DoesNotContain("private-note", otherPage, StringComparison.Ordinal);
            Assert.DoesNotContain("12.00", otherPage, StringComparison.Ordinal);
        }
    }

    /// <summary>Rent = value × yield, the yield not asked (derived, in %).</summary>
    private static Task<System.Text.Json.Nodes.JsonNode> DeclareImpliedYieldAsync(Setup s) =>
        s.Staff.PostOk($"/api/panels/{s.PanelId}/relations", new
        {
            shape = "Product", result = new { questionId = s.Rent }, first = new { questionId = s.Value }, second = new { label = "Implied yield", unit = "%", factor = 0.01 },
        });

    [SkippableFact]
    public async Task TwoOfThreeAsked_TheThirdIsDerived_ShownAndExportedAsDerived()
    {
        var app = await StartAsync();
        var s = await PanelAsync(app, askYield: false);
        var declared = await DeclareImpliedYieldAsync(s);
        Assert.Null(declared["second"]!["questionId"]);
        await AnswerRoundAsync(s);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/conclude", new { }, HttpStatusCode.OK);

        var consensus = (await s.Staff.GetOk($"/api/panels/{s.PanelId}/consensus")).AsArray();
        double Of(int q) => (double)consensus.Single(c => (int)c!["questionId"]! == q)!["value"]!;
        var impliedYield = Of(s.Rent) / Of(s.Value) * 100;
        var check = await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations/check");
        Assert.Equal("second", (string)check["consensus"]![0]!["derivedRole"]!);
        Assert.Equal(impliedYield, (double)check["consensus"]![0]!["derived"]![0]!["value"]!, 9);

        var csv = (await s.Staff.GetStringAsync($"/api/panels/{s.PanelId}/consensus.csv?include=derived")).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        var derived = Assert.Single(csv, l => l.EndsWith(",derived", StringComparison.Ordinal)).Split(',');
        Assert.Equal("Implied yield", derived[3]);
        Assert.Equal("2026", derived[7]);
        Assert.Equal(impliedYield, double.Parse(derived[8], Inv), 9);
    }

    [SkippableFact]
    public async Task ConcludedPanel_RelationCannotBeRemoved_ItsChecksStayAsPublished()
    {
        var app = await StartAsync();
        var s = await PanelAsync(app, askYield: false);
        var declared = await DeclareImpliedYieldAsync(s);
        await AnswerRoundAsync(s);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/conclude", new { }, HttpStatusCode.OK);

        var removed = await s.Staff.DeleteAsync($"/api/panels/{s.PanelId}/relations/{(int)declared["id"]!}");

        Assert.Equal(HttpStatusCode.Conflict, removed.StatusCode);
        Assert.Contains("concluded", await removed.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        Assert.Single((await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations")).AsArray());
    }

    [SkippableFact]
    public async Task PanelPage_DeclaresAndRemovesARelation_BadInputShownBesideItsField_AndChangesNothing()
    {
        var app = await StartAsync();
        var s = await PanelAsync(app);
        var pages = await StaffPages.SignedInClientAsync(app, "Facilitator");
        var url = $"/Staff/Panels/Details/{s.PanelId}";
        var html = await pages.GetStringAsync(url);
        Assert.Contains("id=\"relation-form\"", html, StringComparison.Ordinal);
        var token = StaffPages.TokenOf(html);

        List<KeyValuePair<string, string>> Form(string shape = "Product", string resultFactor = "", int? first = null, string secondFactor = "0.01") =>
        [
            new("Relation.Shape", shape),
            new("Relation.Result.QuestionId", s.Rent.ToString(Inv)), new("Relation.Result.Label", ""), new("Relation.Result.Unit", ""), new("Relation.Result.Factor", resultFactor),
            new("Relation.First.QuestionId", (first ?? s.Value).ToString(Inv)), new("Relation.First.Label", ""), new("Relation.First.Unit", ""), new("Relation.First.Factor", ""),
            new("Relation.Second.QuestionId", s.Yield.ToString(Inv)), new("Relation.Second.Label", ""), new("Relation.Second.Unit", ""), new("Relation.Second.Factor", secondFactor),
        ];

        // Bad input: the page again, the message beside the field it is about (the same rules as the API), nothing saved.
        foreach (var (fields, field, words) in new (List<KeyValuePair<string, string>>, string, string)[]
        {
            (Form(resultFactor: "twelve"), "Relation.Result.Factor", "unit factor"),
            (Form(resultFactor: "-1"), "Relation.Result.Factor", "positive number"),
            (Form(secondFactor: "0,01"), "Relation.Second.Factor", "unit factor"),
            (Form(first: s.Rent), "Relation.First.QuestionId", "one term"),
            (Form(shape: "Times"), "Relation.Shape", "Product"),
        })
        {
            var response = await pages.PostFormAsync(url + "?handler=DeclareRelation", token, fields);
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var page = await response.Content.ReadAsStringAsync();
            var beside = Regex.Match(page, "data-error-for=\"" + Regex.Escape(field) + "\"[^>]*>([^<]*)<");
            Assert.True(beside.Success, $"No message beside {field}.");
            Assert.Contains(words, WebUtility.HtmlDecode(beside.Groups[1].Value), StringComparison.Ordinal);
        }
        Assert.Empty((await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations")).AsArray());

        // A good declaration is saved (the API lists it with the same formula) and shown with a removal that asks first.
        var declared = await pages.PostFormAsync(url + "?handler=DeclareRelation", token, Form());
        Assert.Equal(HttpStatusCode.Redirect, declared.StatusCode);
        var relation = Assert.Single((await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations")).AsArray())!;
        Assert.Equal("Prime rent [EUR/m²/year] = Capital value [EUR/m²] × 0.01 × Prime yield [%]", (string)relation["formula"]!);
        html = WebUtility.HtmlDecode(await pages.GetStringAsync(url));
        Assert.Contains((string)relation["formula"]!, html, StringComparison.Ordinal);
        var remove = Regex.Match(html, "<form[^>]*handler=RemoveRelation[^>]*>.*?</form>", RegexOptions.Singleline);
        Assert.True(remove.Success, "No removal form.");
        Assert.Contains($"name=\"relationId\" value=\"{(int)relation["id"]!}\"", remove.Value, StringComparison.Ordinal);
        Assert.Contains("data-confirm=", remove.Value, StringComparison.Ordinal);

        var removed = await pages.PostFormAsync(url + "?handler=RemoveRelation", token, [new("relationId", ((int)relation["id"]!).ToString(Inv))]);
        Assert.Equal(HttpStatusCode.Redirect, removed.StatusCode);
        Assert.Empty((await s.Staff.GetOk($"/api/panels/{s.PanelId}/relations")).AsArray());
        var audit = await app.WithDbAsync(db => db.AuditEvents.Where(a => a.PanelId == s.PanelId && a.Action.StartsWith("Relation")).Select(a => a.Action).ToListAsync());
        Assert.Equal(["RelationDeclared", "RelationRemoved"], audit.Order(StringComparer.Ordinal));
    }

    private static string? NoteOf(string html) => NoteRegex().Match(html) is { Success: true } m ? m.Groups[1].Value : null;

    [GeneratedRegex("<div class=\"alert alert-info small private-note\" role=\"note\">(.*?)</div>", RegexOptions.Singleline)]
    private static partial Regex NoteRegex();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteRelationTests(SqliteFixture fixture) : RelationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresRelationTests(PostgresFixture fixture) : RelationTests(fixture);
