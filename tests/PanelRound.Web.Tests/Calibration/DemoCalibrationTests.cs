using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using PanelRound.Web.Demo;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Calibration;

/// <summary>
/// The demo's calibration questions: the figures the app shows equal a recomputation from the demo
/// files with the core's classical model (R. M. Cooke, "Experts in Uncertainty", Oxford University
/// Press, 1991, chapter 12), and the experts' traits show: the over-confident expert is poorly
/// calibrated, the accurate one well.
/// </summary>
public abstract class DemoCalibrationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly string DemoFolder = Path.Combine(AppContext.BaseDirectory, "demo-data");

    [SkippableFact]
    public async Task Demo_Calibration_EqualsRecomputationFromTheDemoFiles_AndTheTraitsShow()
    {
        var app = await StartAsync(new Dictionary<string, string?> { ["Demo:Enabled"] = "true", ["Demo:Folder"] = DemoFolder });
        var staff = await app.StaffClientAsync();
        var scenario = DemoScenario.Read(DemoFolder);
        var running = scenario.Panels.Single(p => !p.Concluded);
        var panelId = await app.WithDbAsync(db => db.Panels.Where(p => p.ExternalKey == running.Key).Select(p => p.Id).SingleAsync());

        var view = await staff.GetOk($"/api/panels/{panelId}/calibration");
        Assert.Null(view["status"]);
        Assert.Equal(10, view["questions"]!.AsArray().Count);
        Assert.Equal(10, (int)view["truthsRecorded"]!);
        Assert.Equal(1, (int)view["settings"]!["roundNumber"]!);

        // Recomputation: the last closed round (1) of the running panel, the files' true values, default settings.
        var calibration = running.Questions.Where(q => q.CalibrationPeriod is not null).ToList();
        Assert.Equal(10, calibration.Count);
        var items = calibration.Select(q => new CalibrationItem(q.Indicator, q.TrueValue!.Value, q.LogScale == true ? BackgroundMeasure.LogUniform : BackgroundMeasure.Uniform)).ToList();
        var codes = running.Members.ToDictionary(m => m.Expert, m => m.PanelCode);
        var assessments = scenario.Estimates
            .Where(e => e.Panel == running.Key && e.Round == 1 && calibration.Any(q => q.Indicator == e.Indicator))
            .Select(e => new CalibrationAssessment(codes[e.Expert], e.Indicator, new RangeAnswer(e.P10!.Value, e.P50!.Value, e.P90!.Value)))
            .ToList();
        var expected = ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);

        var lines = view["experts"]!.AsArray().ToDictionary(e => (string)e!["panelCode"]!);
        Assert.Equal(expected.Experts.Count, lines.Count);
        foreach (var e in expected.Experts)
        {
            var line = lines[e.Score.Key]!;
            Assert.Equal(10, (int)line["n"]!);
            Assert.Equal(e.Score.Hits, line["hits"]!.AsArray().Select(h => (int)h!).ToArray());
            Assert.Equal(e.Score.Calibration, (double)line["calibration"]!, 10);
            Assert.Equal(e.Score.Information, (double)line["information"]!, 10);
            Assert.Equal(e.Weight, (double)line["weight"]!, 10);
        }

        // The traits: the over-confident expert low, the accurate one high.
        string CodeOf(string profile) => codes[scenario.Experts.Single(x => x.Profile.StartsWith(profile, StringComparison.Ordinal)).Key];
        var overConfident = (double)lines[CodeOf("over-confident")]!["calibration"]!;
        var accurate = (double)lines[CodeOf("accurate")]!["calibration"]!;
        Assert.True(overConfident < 0.01, $"over-confident calibration {overConfident}");
        Assert.True(accurate > 0.3, $"accurate calibration {accurate}");

        // The cross-validation runs on the demo (10 questions: 252 splits of 5).
        var cv = await staff.GetOk($"/api/panels/{panelId}/calibration/cross-validation");
        Assert.Null(cv["status"]);
        Assert.Equal(252, (int)cv["splits"]!);
        Assert.True((bool)cv["exhaustive"]!);

        // Calibration questions take no part in the consensus comparison of the demo's closed round.
        var html = await (await Defects.StaffPages.SignedInClientAsync(app, "Reviewer")).GetStringAsync($"/Staff/Panels/Calibration/{panelId}");
        Assert.Contains("id=\"calibration-consensus\"", html, StringComparison.Ordinal);
        foreach (var q in calibration)
        {
            Assert.DoesNotContain($"<tr><td>{System.Net.WebUtility.HtmlEncode(q.Label)} <span", html, StringComparison.Ordinal);
        }
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteDemoCalibrationTests(SqliteFixture fixture) : DemoCalibrationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresDemoCalibrationTests(PostgresFixture fixture) : DemoCalibrationTests(fixture);
