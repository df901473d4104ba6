using System.Net;
using System.Net.Http.Json;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Calibration;

/// <summary>
/// Calibration questions through the API and pages: set-up rules, true values, their absence from
/// the consensus, the exports and the long-horizon scorecard, the scores and weights by panel code
/// (R. M. Cooke, "Experts in Uncertainty", Oxford University Press, 1991, chapter 12), the
/// calibration-weighted consensus, the cross-validation's input rules, and what an expert sees.
/// </summary>
public abstract class CalibrationQuestionTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static async Task<JsonNode> ProblemOf(HttpResponseMessage r)
    {
        Assert.Equal(HttpStatusCode.BadRequest, r.StatusCode);
        return JsonNode.Parse(await r.Content.ReadAsStringAsync())!;
    }

    [SkippableFact]
    public async Task AddQuestion_CalibrationWithPointFormatOrTwoPeriods_Is400NamingTheField()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        var indicator = (int)(await p.Staff.PostOk("/api/indicators", new { key = "cal-other", name = "Other", unitLabel = "%", decimals = 1 }))["id"]!;
        var draft = (int)(await p.Staff.PostOk("/api/panels", new { title = "Draft", startsOn = "2026-11-02", targetPeriods = "2027-2028" }))["id"]!;

        var point = await p.Staff.PostAsJsonAsync($"/api/panels/{draft}/questions", new { indicatorId = indicator, label = "Yield", format = "Point", targetPeriods = "2026Q3", calibration = true });
        Assert.NotNull((await ProblemOf(point))["errors"]!["format"]);
        var twoPeriods = await p.Staff.PostAsJsonAsync($"/api/panels/{draft}/questions", new { indicatorId = indicator, label = "Yield", format = "Range", targetPeriods = "2026Q2,2026Q3", calibration = true });
        Assert.NotNull((await ProblemOf(twoPeriods))["errors"]!["targetPeriods"]);
        var noPeriod = await p.Staff.PostAsJsonAsync($"/api/panels/{draft}/questions", new { indicatorId = indicator, label = "Yield", format = "Range", calibration = true });
        Assert.NotNull((await ProblemOf(noPeriod))["errors"]!["targetPeriods"]);
        var notBool = await p.Staff.PostAsJsonAsync($"/api/panels/{draft}/questions", new { indicatorId = indicator, label = "Yield", format = "Range", calibration = "yes" });
        Assert.NotNull((await ProblemOf(notBool))["errors"]!["calibration"]);
    }

    [SkippableFact]
    public async Task RecordTrueValue_BadInput_Is400NamingTheFieldAndChangesNothing()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        var q = p.CalibrationQuestions[0];

        Assert.NotNull((await ProblemOf(await p.PutTrueValueAsync(q, new { value = "a lot" })))["errors"]!["value"]);
        Assert.NotNull((await ProblemOf(await p.PutTrueValueAsync(q, new { value = 1e13 })))["errors"]!["value"]);
        Assert.NotNull((await ProblemOf(await p.PutTrueValueAsync(p.PointQuestion, new { value = 5 })))["errors"]!["questionId"]);
        Assert.Equal(HttpStatusCode.NotFound, (await p.PutTrueValueAsync(999_999, new { value = 5 })).StatusCode);

        var panel = await p.Staff.GetOk($"/api/panels/{p.PanelId}");
        Assert.All(panel["questions"]!.AsArray(), x => Assert.Null(x!["trueValue"]?.GetValue<double?>()));

        var ok = await p.PutTrueValueAsync(q, new { value = 123.5 });
        Assert.Equal(HttpStatusCode.OK, ok.StatusCode);
        Assert.Equal(123.5, (double)JsonNode.Parse(await ok.Content.ReadAsStringAsync())!["trueValue"]!);
        var audit = await p.App.WithDbAsync(db => db.AuditEvents.CountAsync(a => a.Action == "calibration.true-value.recorded"));
        Assert.Equal(1, audit);
    }

    [SkippableFact]
    public async Task Conclude_WithCalibrationQuestions_LeavesThemOutOfConsensusExportsAndScorecard()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.RecordTruthsAsync();
        // The calibration indicator's observation exists too: the long-horizon scorecard could score it, and must not.
        var volume = await p.App.WithDbAsync(db => db.Indicators.Where(i => i.Key == "cal-volume").Select(i => i.Id).SingleAsync());
        await p.Staff.PostOk($"/api/indicators/{volume}/observations", new[] { new { period = CalibrationPanel.CalibrationPeriod, value = 100, source = "registry" } }, HttpStatusCode.OK);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);

        var consensus = (await p.Staff.GetOk($"/api/panels/{p.PanelId}/consensus")).AsArray();
        Assert.Equal(4, consensus.Count);
        Assert.DoesNotContain(consensus, c => p.CalibrationQuestions.Contains((int)c!["questionId"]!));
        var csv = await p.Staff.GetStringAsync($"/api/panels/{p.PanelId}/consensus.csv");
        Assert.DoesNotContain("Volume, segment", csv, StringComparison.Ordinal);
        Assert.Contains("Price per m²", csv, StringComparison.Ordinal);

        using var scope = p.App.Services.CreateScope();
        var data = await scope.ServiceProvider.GetRequiredService<ScoringDataLoader>().LoadAsync();
        Assert.DoesNotContain(data.ExpertItems, i => i.QuestionKey.StartsWith("cal-volume", StringComparison.Ordinal));
        Assert.DoesNotContain(data.Panels.Values.SelectMany(x => x.Questions), q => p.CalibrationQuestions.Contains(q.Id));
    }

    // Cooke (1991), ch. 12: hits per bin, calibration, information and weights; the API's figures equal the core's on the same answers.
    [SkippableFact]
    public async Task CalibrationApi_AfterTruths_GivesHitsPerBinByPanelCodeAndTheCoresFigures()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        await p.AnswerAllAsync();
        var before = await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration");
        Assert.Equal("No round has closed yet.", (string)before["status"]!);
        Assert.Empty(before["experts"]!.AsArray());
        await p.CloseRoundAsync();
        Assert.Equal("No true value has been recorded yet.", (string)(await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration"))["status"]!);
        await p.RecordTruthsAsync(100);

        var view = await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration");
        Assert.Null(view["status"]);
        Assert.Equal(3, (int)view["truthsRecorded"]!);
        Assert.Equal(0.10, (double)view["settings"]!["overshoot"]!);
        Assert.Equal("final", (string)view["settings"]!["round"]!);
        var experts = view["experts"]!.AsArray();
        int[][] expectedHits = [[3, 0, 0, 0], [0, 0, 3, 0], [0, 3, 0, 0], [0, 0, 0, 3]];
        for (var i = 0; i < 4; i++)
        {
            var line = experts.Single(e => (string)e!["panelCode"]! == p.Members[i].Code)!;
            Assert.Equal(expectedHits[i], line["hits"]!.AsArray().Select(h => (int)h!).ToArray());
            Assert.Equal(3, (int)line["n"]!);
        }

        var items = p.CalibrationQuestions.Select(q => new CalibrationItem($"q{q}", 100)).ToList();
        var assessments = p.CalibrationQuestions.SelectMany(q => Enumerable.Range(0, 4).Select(i =>
        {
            var (l, m, h) = CalibrationPanel.CalibrationAnswer(i);
            return new CalibrationAssessment(p.Members[i].Code, $"q{q}", new RangeAnswer(l, m, h));
        })).ToList();
        var expected = ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);
        foreach (var e in expected.Experts)
        {
            var line = experts.Single(x => (string)x!["panelCode"]! == e.Score.Key)!;
            Assert.Equal(e.Score.Calibration, (double)line["calibration"]!, 12);
            Assert.Equal(e.Score.Information, (double)line["information"]!, 12);
            Assert.Equal(e.Weight, (double)line["weight"]!, 12);
        }
        Assert.Equal(expected.Cutoff, (double)view["settings"]!["cutoffUsed"]!, 12);
        Assert.Equal(expected.Weighted!.Combined, (double)view["weighted"]!["combined"]!, 12);
    }

    [SkippableFact]
    public async Task Conclude_CalibrationWeighting_UsesThePoolForRangeAndTheWeightedMedianForPoint()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync(), weighting: "Calibration");
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.RecordTruthsAsync(100);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);

        var consensus = (await p.Staff.GetOk($"/api/panels/{p.PanelId}/consensus")).AsArray();
        Assert.All(consensus.Where(c => (int)c!["questionId"]! == p.RangeQuestion), c => Assert.Equal("CalibrationWeightedPool", (string)c!["method"]!));
        Assert.All(consensus.Where(c => (int)c!["questionId"]! == p.PointQuestion), c => Assert.Equal("CalibrationWeightedMedian", (string)c!["method"]!));

        // The weighted median of the point answers 3000, 3100, 3200, 3300 with the experts' calibration weights, recomputed.
        var weights = (await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration"))["experts"]!.AsArray()
            .ToDictionary(e => (string)e!["panelCode"]!, e => (double)e!["weight"]!);
        var w = p.Members.Select(m => weights[m.Code]).ToList();
        var median = Quantiles.WeightedMedian([3000, 3100, 3200, 3300], w);
        Assert.Equal(median, (double)consensus.First(c => (int)c!["questionId"]! == p.PointQuestion)!["value"]!, 9);
    }

    [SkippableFact]
    public async Task CrossValidation_FewQuestionsOrBadTrainingSize_SaysSoOr400NamingTrainingSize()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync(), calibrationQuestions: 8);
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.RecordTruthsAsync(100);
        await p.PutTrueValueAsync(p.CalibrationQuestions[7], new { value = (double?)null });

        var few = await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration/cross-validation");
        Assert.Contains("at least 8", (string)few["status"]!, StringComparison.Ordinal);

        await p.PutTrueValueAsync(p.CalibrationQuestions[7], new { value = 100 });
        var run = await p.Staff.GetOk($"/api/panels/{p.PanelId}/calibration/cross-validation?trainingSize=4");
        Assert.Null(run["status"]);
        Assert.Equal(70, (int)run["splits"]!);
        Assert.True((bool)run["exhaustive"]!);
        foreach (var bad in new[] { "0", "8", "abc" })
        {
            var r = await p.Staff.GetAsync($"/api/panels/{p.PanelId}/calibration/cross-validation?trainingSize={bad}");
            Assert.NotNull((await ProblemOf(r))["errors"]!["trainingSize"]);
        }
    }

    // Anonymity: an expert sees a calibration question as an ordinary Range question; no scores, no truths, no flag.
    [SkippableFact]
    public async Task ExpertViews_ShowNothingOfTheCalibrationMachinery()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        await p.AnswerAllAsync();
        await p.RecordTruthsAsync(4321.5);
        var pages = new List<string>();
        using (var expert = p.App.Client().WithExpertToken(p.Members[0].Token))
        {
            pages.Add(await (await expert.GetAsync($"/api/expert/panels/{p.PanelId}")).Content.ReadAsStringAsync());
            var status = (await expert.GetAsync($"/api/panels/{p.PanelId}/calibration")).StatusCode;
            Assert.True(status is HttpStatusCode.Forbidden or HttpStatusCode.Unauthorized, $"An expert's token reached the calibration API: {(int)status}");
        }
        var browser = await StaffPages.ExpertClientAsync(p.App, p.Members[0].Token);
        pages.Add(await browser.GetStringAsync("/expert"));
        Assert.NotEqual(HttpStatusCode.OK, (await browser.GetAsync($"/Staff/Panels/Calibration/{p.PanelId}")).StatusCode);

        await p.CloseRoundAsync();
        using (var expert = p.App.Client().WithExpertToken(p.Members[0].Token))
        {
            pages.Add(await (await expert.GetAsync($"/api/expert/panels/{p.PanelId}")).Content.ReadAsStringAsync());
        }
        pages.Add(await browser.GetStringAsync("/expert"));

        foreach (var page in pages)
        {
            Assert.DoesNotContain("calibrat", page, StringComparison.OrdinalIgnoreCase);
            Assert.DoesNotContain("4321", page, StringComparison.Ordinal);
            Assert.DoesNotContain("truevalue", page, StringComparison.OrdinalIgnoreCase);
            Assert.DoesNotContain("logscale", page, StringComparison.OrdinalIgnoreCase);
            Assert.DoesNotContain("information", page, StringComparison.OrdinalIgnoreCase);
        }
        // The calibration questions' JSON has exactly the keys of the ordinary Range question.
        var form = JsonNode.Parse(pages[0])!["questions"]!.AsArray();
        var ordinary = form.Single(q => (int)q!["id"]! == p.RangeQuestion)!.AsObject().Select(kv => kv.Key).Order().ToList();
        Assert.All(form.Where(q => p.CalibrationQuestions.Contains((int)q!["id"]!)), q => Assert.Equal(ordinary, q!.AsObject().Select(kv => kv.Key).Order().ToList()));
    }


    [SkippableFact]
    public async Task PastPanelImport_CalibrationColumn_MarksTheQuestionTakesItsTruthAndKeepsItOutOfTheConsensus()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        // The calibration question asks about 2023Q3, which ended before the panel's start: allowed for calibration questions only.
        var forecasts = "panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value,p10,p50,p90,calibration\n"
            + "old-1,2023-11-01,2023-12-01,price-x,EUR/m²,2025,ex-a,1,3100,,,,0\n"
            + "old-1,2023-11-01,2023-12-01,price-x,EUR/m²,2025,ex-b,1,3300,,,,\n"
            + "old-1,2023-11-01,2023-12-01,vol-x,EUR m,2023Q3,ex-a,1,,90,100,110,1\n"
            + "old-1,2023-11-01,2023-12-01,vol-x,EUR m,2023Q3,ex-b,1,,120,125,130,1\n";
        var observations = "indicator,period,value,observed_on\nvol-x,2023Q3,104,2023-12-15\nprice-x,2025,3200,2026-02-01\n";
        var r = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True((int)r.Status is >= 200 and < 300, r.Text);

        var panelId = await app.WithDbAsync(db => db.Panels.Where(x => x.ExternalKey == "old-1").Select(x => x.Id).SingleAsync());
        var panel = await staff.GetOk($"/api/panels/{panelId}");
        var questions = panel["questions"]!.AsArray();
        var vol = questions.Single(q => (string)q!["targetPeriods"]![0]! == "2023Q3")!;
        Assert.True((bool)vol["calibration"]!);
        Assert.Equal(104, (double)vol["trueValue"]!);
        Assert.False((bool)questions.Single(q => (string)q!["targetPeriods"]![0]! == "2025")!["calibration"]!);
        Assert.Equal(new[] { "2025" }, panel["targetPeriods"]!.AsArray().Select(x => (string)x!).ToArray());
        var consensus = (await staff.GetOk($"/api/panels/{panelId}/consensus")).AsArray();
        Assert.Single(consensus);

        // ex-a's band holds the truth between P50 and P90 (bin 2), ex-b's lies above it (bin 0).
        var view = await staff.GetOk($"/api/panels/{panelId}/calibration");
        var hits = view["experts"]!.AsArray().Select(e => string.Join(",", e!["hits"]!.AsArray().Select(h => (int)h!))).Order().ToList();
        Assert.Equal(new[] { "0,0,1,0", "1,0,0,0" }, hits);
    }

    [SkippableFact]
    public async Task PastPanelImport_BadCalibrationValueOrPointAnswer_Is400NamingTheRow()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        const string Header = "panel,panel_start,indicator,unit,target_period,expert,round,value,p10,p50,p90,calibration\n";
        foreach (var row in new[] { "old-2,2023-11-01,vol-y,EUR m,2023Q3,ex-a,1,,90,100,110,yes\n", "old-2,2023-11-01,vol-y,EUR m,2023Q3,ex-a,1,100,,,,1\n" })
        {
            var r = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", Header + row), ("observations", "indicator,period,value\n"));
            Assert.Equal(HttpStatusCode.BadRequest, r.Status);
            var problem = r.Body!;
            Assert.NotNull(problem["errors"]!["forecasts row 1"]);
        }
        Assert.Equal(0, await app.WithDbAsync(db => db.Panels.CountAsync()));
    }

    [SkippableFact]
    public async Task StaffPages_ResultsCalibrationAndCrossValidation_ShowTheFiguresByPanelCode()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync(), calibrationQuestions: 8);
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.RecordTruthsAsync(100);
        var staff = await StaffPages.SignedInClientAsync(p.App, "Reviewer");

        foreach (var page in new[] { $"/Staff/Panels/Results/{p.PanelId}", $"/Staff/Panels/Calibration/{p.PanelId}" })
        {
            var html = await staff.GetStringAsync(page);
            Assert.Contains("id=\"calibration-scores\"", html, StringComparison.Ordinal);
            Assert.Contains("id=\"calibration-consensus\"", html, StringComparison.Ordinal);
            Assert.Contains("fewer than about 8–10 questions", html, StringComparison.Ordinal);
            Assert.All(p.Members, m => Assert.Contains(m.Code, html, StringComparison.Ordinal));
            Assert.DoesNotContain("Calibrated expert", html, StringComparison.Ordinal);
        }
        var cv = await staff.GetStringAsync($"/Staff/Panels/CrossValidation/{p.PanelId}?trainingSize=4");
        Assert.Contains("70 splits (all of them)", cv, StringComparison.Ordinal);
        var bad = await staff.GetStringAsync($"/Staff/Panels/CrossValidation/{p.PanelId}?trainingSize=9");
        Assert.Contains("The training size is 1 to 7", bad, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task ExpertScorecard_AfterTruths_ShowsTheEarlyRecordApartWithItsDatesAndN()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        var expertId = await p.App.WithDbAsync(db => db.Memberships.Where(m => m.Id == p.Members[1].MembershipId).Select(m => m.ExpertId).SingleAsync());
        var reviewer = await StaffPages.SignedInClientAsync(p.App, "Reviewer");
        Assert.Contains("No calibration question with a true value yet.", await reviewer.GetStringAsync($"/Staff/Scorecard/Expert/{expertId}"), StringComparison.Ordinal);

        await p.RecordTruthsAsync(100);
        var html = await reviewer.GetStringAsync($"/Staff/Scorecard/Expert/{expertId}");
        var section = WebUtility.HtmlDecode(html[html.IndexOf("id=\"early-record\"", StringComparison.Ordinal)..]);
        Assert.Contains($"<code>{p.Members[1].Code}</code>", section, StringComparison.Ordinal);
        Assert.Contains("<td>3</td><td>0 · 0 · 3 · 0</td>", section, StringComparison.Ordinal);
        Assert.Contains(DateTime.UtcNow.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture), section, StringComparison.Ordinal);
    }

    // Anonymity: the calibration period's figure, once in the indicator's catalog (its period ended before the panel's start),
    // must not reach the expert through the question's reference series.
    [SkippableFact]
    public async Task ExpertViews_CalibrationFigureInTheCatalog_IsNotInTheReferenceSeries()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        var volume = await p.App.WithDbAsync(db => db.Indicators.Where(i => i.Key == "cal-volume").Select(i => i.Id).SingleAsync());
        await p.Staff.PostOk($"/api/indicators/{volume}/observations", new[]
        {
            new { period = "2026Q1", value = 611.25, source = "registry" },
            new { period = CalibrationPanel.CalibrationPeriod, value = 4321.5, source = "registry" },
        }, HttpStatusCode.OK);

        using var expert = p.App.Client().WithExpertToken(p.Members[0].Token);
        var json = await (await expert.GetAsync($"/api/expert/panels/{p.PanelId}")).Content.ReadAsStringAsync();
        var page = await (await StaffPages.ExpertClientAsync(p.App, p.Members[0].Token)).GetStringAsync("/expert");
        foreach (var text in new[] { json, page })
        {
            Assert.DoesNotContain("4321", text, StringComparison.Ordinal);
        }
        Assert.Contains("611.25", json, StringComparison.Ordinal);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteCalibrationQuestionTests(SqliteFixture fixture) : CalibrationQuestionTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresCalibrationQuestionTests(PostgresFixture fixture) : CalibrationQuestionTests(fixture);
