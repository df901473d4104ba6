using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text.Json.Nodes;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Benchmarks;

/// <summary>
/// Benchmark forecasts through the API, the scorecard, the exports and the settings. Closed forms from
/// R. J. Hyndman and G. Athanasopoulos, Forecasting: Principles and Practice, 3rd ed., OTexts, 2021 (FPP3).
/// </summary>
public abstract class BenchmarkTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>2010..2021: a trend with a wobble. The panel starts in 2020, so 2010-2019 are the reference series and 2020-2021 the outcomes.</summary>
    private static readonly Dictionary<int, double> Series = Enumerable.Range(2010, 12).ToDictionary(y => y, y => 100.0 + (3 * (y - 2010)) + (y % 2 == 0 ? 1.5 : -1.0));

    private static async Task<int> IndicatorAsync(HttpClient staff, string key, IReadOnlyDictionary<int, double> series, string unit = "points")
    {
        var id = (int)(await staff.PostOk("/api/indicators", new { key, name = key, unitLabel = unit, decimals = 2 }))["id"]!;
        await staff.PostOk($"/api/indicators/{id}/observations",
            series.Select(kv => new { period = kv.Key.ToString(Inv), value = kv.Value, source = "test", observedOn = $"{kv.Key + 1}-02-15" }).ToArray(), HttpStatusCode.OK);
        return id;
    }

    /// <summary>A concluded panel (start 2020-01-15, targets 2020-2021) with a Point and a Range question on the series; five experts.</summary>
    private static async Task<(HttpClient Staff, int PanelId, int Point, int Range)> ConcludedAsync(TestApp app)
    {
        var staff = await app.StaffClientAsync();
        var indicator = await IndicatorAsync(staff, "bench-idx", Series);
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Bench", startsOn = "2020-01-15", targetPeriods = "2020-2021" }))["id"]!;
        var point = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "Index", format = "Point" }))["id"]!;
        var range = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "Index band", format = "Range" }))["id"]!;
        var tokens = new List<string>();
        for (var i = 0; i < 5; i++)
        {
            var e = (int)(await staff.PostOk("/api/experts", new { name = $"B{i}", email = $"b{i}@bench.example" }))["id"]!;
            tokens.Add((string)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = e, sendInvitation = false }))["token"]!);
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        for (var i = 0; i < 5; i++)
        {
            await app.Client().WithExpertToken(tokens[i]).PostOk($"/api/expert/panels/{panelId}/estimates", new
            {
                draft = false,
                answers = new object[]
                {
                    new { questionId = point, periods = new[] { 2020, 2021 }.Select(y => new { period = y.ToString(Inv), value = 126.0 + i + (2 * (y - 2020)) }).ToArray() },
                    new { questionId = range, periods = new[] { 2020, 2021 }.Select(y => new { period = y.ToString(Inv), p10 = 120.0 + i, p50 = 127.0 + i, p90 = 133.0 + i }).ToArray() },
                },
            }, HttpStatusCode.OK);
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK);
        return (staff, panelId, point, range);
    }

    [SkippableFact]
    public async Task BenchmarksApi_PathsFromTheReferenceSeries_NaiveAndDriftEqualTheirClosedForms()
    {
        var app = await StartAsync();
        var (staff, panelId, point, _) = await ConcludedAsync(app);
        var body = await staff.GetOk($"/api/panels/{panelId}/benchmarks");
        Assert.Equal(3, (int)body["meanWindow"]!);
        var q = body["questions"]!.AsArray().Single(x => (int)x!["questionId"]! == point)!;
        Assert.Equal(10, (int)q["referenceN"]!);
        Assert.Equal("2019", (string)q["referenceTo"]!);
        var methods = q["benchmarks"]!.AsArray().ToDictionary(b => (string)b!["method"]!, b => b!);
        Assert.Equal(["naive", "drift", "mean", "ses", "holt", "damped"], methods.Keys);
        var y = Enumerable.Range(2010, 10).Select(t => Series[t]).ToArray();

        // FPP3 §5.2 naive: y_T at every horizon; Table 5.2: σ̂√h with σ̂ = √(Σ(y_t − y_{t−1})² / (T − 1)); z = 1.2816 for 80%.
        var diffs = y.Zip(y.Skip(1), (a, b) => b - a).ToArray();
        var sigma = Math.Sqrt(diffs.Sum(d => d * d) / diffs.Length);
        var naive = methods["naive"]["path"]!.AsArray();
        Assert.Equal(["2020", "2021"], naive.Select(p => (string)p!["period"]!));
        Assert.Equal(y[^1], (double)naive[1]!["value"]!, 9);
        Assert.Equal(y[^1] + (1.2815515655446004 * sigma * Math.Sqrt(2)), (double)naive[1]!["p90"]!, 9);

        // FPP3 §5.2 drift: y_T + h(y_T − y_1)/(T − 1).
        var drift = methods["drift"]["path"]!.AsArray();
        Assert.Equal(y[^1] + (2 * (y[^1] - y[0]) / 9), (double)drift[1]!["value"]!, 9);
        Assert.Equal((y[^1] - y[0]) / 9, (double)methods["drift"]["parameters"]!["drift"]!, 9);

        // The mean of the last three, and fitted parameters inside their documented bounds.
        Assert.Equal(y.TakeLast(3).Average(), (double)methods["mean"]["path"]![0]!["value"]!, 9);
        Assert.InRange((double)methods["damped"]["parameters"]!["phi"]!, 0.8, 0.98);
        Assert.True((double)methods["holt"]["inSampleRmse"]! > 0);

        Assert.Equal(HttpStatusCode.NotFound, (await staff.GetAsync("/api/panels/999999/benchmarks")).StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await app.Client().GetAsync($"/api/panels/{panelId}/benchmarks")).StatusCode);
    }

    [SkippableFact]
    public async Task Scorecard_ScoresBenchmarksLikeExperts_AndSkillAgainstTheBestEqualsARecomputation()
    {
        var app = await StartAsync();
        var (staff, panelId, point, range) = await ConcludedAsync(app);
        var card = await staff.GetOk("/api/scorecard");
        var bench = card["benchmarks"]!;

        // Recomputation with plain arithmetic: the scale is the in-sample MAE of the naive forecast on 2010-2019
        // (Hyndman & Koehler 2006, section 3.4); errors are forecast − outcome on 2020 and 2021 of both questions;
        // the consensus from the published consensus, the benchmarks from their published paths.
        var y = Enumerable.Range(2010, 10).Select(t => Series[t]).ToArray();
        var scale = y.Zip(y.Skip(1), (a, b) => Math.Abs(b - a)).Average();
        var consensus = (await staff.GetOk($"/api/panels/{panelId}/consensus")).AsArray();
        var consensusMase = consensus.Average(c => Math.Abs((double)c!["value"]! - Series[int.Parse((string)c["period"]!, Inv)]) / scale);
        var paths = (await staff.GetOk($"/api/panels/{panelId}/benchmarks"))["questions"]!.AsArray();
        var mase = new Dictionary<string, double>();
        foreach (var method in paths[0]!["benchmarks"]!.AsArray().Select(b => (string)b!["method"]!))
        {
            var errors = paths.SelectMany(q => q!["benchmarks"]!.AsArray().Single(b => (string)b!["method"]! == method)!["path"]!.AsArray())
                .Select(p => Math.Abs((double)p!["value"]! - Series[int.Parse((string)p["period"]!, Inv)]) / scale).ToList();
            Assert.Equal(4, errors.Count);
            mase["benchmark:" + method] = errors.Average();
        }
        var best = mase.OrderBy(kv => kv.Value).ThenBy(kv => kv.Key, StringComparer.Ordinal).First();
        Assert.Equal(4, (int)bench["n"]!);
        Assert.Equal(consensusMase, (double)bench["consensusScaledMae"]!, 9);
        Assert.Equal(best.Key, (string)bench["best"]!);
        Assert.Equal(best.Value, (double)bench["bestScaledMae"]!, 9);
        Assert.Equal(1 - (consensusMase / best.Value), (double)bench["skillVsBest"]!, 9);

        // Each benchmark is scored like an expert: the Range question's benchmark item is a P10-P90 interval, so coverage exists.
        var naive = bench["benchmarks"]!.AsArray().Single(b => (string)b!["benchmark"]! == "benchmark:naive")!;
        Assert.Equal(4, (int)naive["summary"]!["n"]!);
        Assert.Equal(2, (int)naive["summary"]!["nRange"]!);
        Assert.Equal(mase["benchmark:naive"], (double)naive["summary"]!["scaledMae"]!, 9);
        _ = point;
        _ = range;

        // The scorecard page shows them too.
        var pages = await StaffPages.SignedInClientAsync(app, "Reviewer");
        var html = await pages.GetStringAsync("/staff/scorecard");
        Assert.Contains("id=\"skill-vs-best\"", html, StringComparison.Ordinal);
        Assert.Contains("Benchmark: Damped trend", html, StringComparison.Ordinal);
        var panelHtml = await pages.GetStringAsync($"/staff/scorecard/panel/{panelId}");
        Assert.Contains("Benchmark: No change (naive)", panelHtml, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Backtest_PerPastPanel_SkillAgainstNoChangeAndTheBestBenchmark_EqualsARecomputation()
    {
        var app = await StartAsync();
        var (staff, panelId, point, range) = await ConcludedAsync(app);

        // Recomputation with plain arithmetic. The backtest's equal-weight consensus of the five final answers, by hand:
        // the Point answers are 126 + i + 2(t − 2020) for i = 0..4, median 128 + 2(t − 2020), no outlier; the Range P50s
        // are 127 + i in both years, whose average (trimmed or not: symmetric) is 129. The published consensus agrees.
        var consensus = new Dictionary<(int, int), double> { [(point, 2020)] = 128, [(point, 2021)] = 130, [(range, 2020)] = 129, [(range, 2021)] = 129 };
        foreach (var c in (await staff.GetOk($"/api/panels/{panelId}/consensus")).AsArray())
        {
            Assert.Equal(consensus[((int)c!["questionId"]!, int.Parse((string)c["period"]!, Inv))], (double)c["value"]!, 9);
        }
        // Scale: in-sample MAE of the one-step naive forecast on the reference series 2010-2019 (Hyndman & Koehler 2006,
        // section 3.4); the no-change forecast is its last value, 2019; skill = 1 − scaled MAE / scaled MAE of the other
        // forecast on the same question-periods (the form of the scorecard's skill against no change).
        var y = Enumerable.Range(2010, 10).Select(t => Series[t]).ToArray();
        var scale = y.Zip(y.Skip(1), (a, b) => Math.Abs(b - a)).Average();
        double Mase(IEnumerable<(double Forecast, int Year)> forecasts) => forecasts.Average(f => Math.Abs(f.Forecast - Series[f.Year]) / scale);
        var consensusMase = Mase(consensus.Select(kv => (kv.Value, kv.Key.Item2)));
        var naiveMase = Mase(consensus.Keys.Select(k => (y[^1], k.Item2)));
        // The benchmarks from their published paths (one path per question; both questions ask the same series).
        var paths = (await staff.GetOk($"/api/panels/{panelId}/benchmarks"))["questions"]!.AsArray();
        var mase = paths[0]!["benchmarks"]!.AsArray().Select(b => (string)b!["method"]!).ToDictionary(m => "benchmark:" + m, m => Mase(paths
            .SelectMany(q => q!["benchmarks"]!.AsArray().Single(b => (string)b!["method"]! == m)!["path"]!.AsArray())
            .Select(p => ((double)p!["value"]!, int.Parse((string)p["period"]!, Inv)))));
        var best = mase.OrderBy(kv => kv.Value).ThenBy(kv => kv.Key, StringComparer.Ordinal).First();

        var line = Assert.Single((await staff.GetOk("/api/scorecard/backtest"))["panels"]!.AsArray())!;
        Assert.Equal(panelId, (int)line["panelId"]!);
        Assert.Equal(4, (int)line["n"]!);
        Assert.Equal(consensusMase, (double)line["equalScaledMae"]!, 9);
        Assert.Equal(4, (int)line["nNaive"]!);
        Assert.Equal(naiveMase, (double)line["naiveScaledMae"]!, 9);
        Assert.Equal(1 - (consensusMase / naiveMase), (double)line["skillVsNaive"]!, 9);
        Assert.Equal(best.Key, (string)line["best"]!);
        Assert.Equal(best.Value, (double)line["bestScaledMae"]!, 9);
        Assert.Equal(1 - (consensusMase / best.Value), (double)line["skillVsBest"]!, 9);
        // Nobody had a record before this panel closed: no weighted consensus, so no weighted skill.
        Assert.False((bool)line["hasHistory"]!);
        Assert.Null(line["weightedSkillVsNaive"]);
        Assert.Null(line["weightedSkillVsBest"]);

        // The backtest page shows both skills per panel.
        var pages = await StaffPages.SignedInClientAsync(app, "Reviewer");
        var html = await pages.GetStringAsync("/staff/scorecard/backtest");
        var row = System.Text.RegularExpressions.Regex.Match(html, "<tr[^>]*data-panel=\"" + panelId.ToString(Inv) + "\".*?</tr>", System.Text.RegularExpressions.RegexOptions.Singleline);
        Assert.True(row.Success, "No backtest row for the panel.");
        Assert.Contains((1 - (consensusMase / naiveMase)).ToString("N2", Inv), row.Value, StringComparison.Ordinal);
        Assert.Contains((1 - (consensusMase / best.Value)).ToString("N2", Inv), row.Value, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Exports_WithInclude_AddBenchmarkRowsAndTheSourceColumnLast_WithoutItUnchanged_BadIncludeIs400()
    {
        var app = await StartAsync();
        var (staff, panelId, _, _) = await ConcludedAsync(app);
        var plain = (await staff.GetStringAsync($"/api/panels/{panelId}/consensus.csv")).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal("panel_id,panel,question_id,question,indicator,unit,format,period,consensus,low,high,band,n,method,round,published_at", plain[0]);
        Assert.Equal(5, plain.Length);

        var extended = (await staff.GetStringAsync($"/api/panels/{panelId}/consensus.csv?include=benchmarks,derived")).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(plain[0] + ",source", extended[0]);
        Assert.Equal(plain.Skip(1).Select(l => l + ",consensus"), extended.Skip(1).Take(4));
        var sources = extended.Skip(1).Select(l => l.Split(',')[^1]).ToList();
        // Two questions x two periods x six benchmarks.
        Assert.Equal(24, sources.Count(s => s.StartsWith("benchmark:", StringComparison.Ordinal)));
        Assert.Contains("benchmark:damped", sources);
        var bench = (await staff.GetOk($"/api/panels/{panelId}/benchmarks"))["questions"]![0]!["benchmarks"]!.AsArray().Single(b => (string)b!["method"]! == "naive")!["path"]![0]!;
        var naiveRow = extended.Single(l => l.EndsWith(",benchmark:naive", StringComparison.Ordinal) && l.Contains(",2020,", StringComparison.Ordinal) && l.Contains(",Point,", StringComparison.Ordinal)).Split(',');
        Assert.Equal((double)bench["value"]!, double.Parse(naiveRow[8], Inv), 12);
        Assert.Equal((double)bench["p10"]!, double.Parse(naiveRow[9], Inv), 12);
        Assert.Equal("P10-P90", naiveRow[11]);

        var xlsx = await staff.GetAsync($"/api/panels/{panelId}/consensus.xlsx?include=benchmarks");
        Assert.Equal(HttpStatusCode.OK, xlsx.StatusCode);

        foreach (var bad in new[] { "everything", "", "benchmarks,,x" })
        {
            var response = await staff.GetAsync($"/api/panels/{panelId}/consensus.csv?include={Uri.EscapeDataString(bad)}");
            Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
            Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
            Assert.NotNull(JsonNode.Parse(await response.Content.ReadAsStringAsync())!["errors"]!["include"]);
        }
    }

    [SkippableFact]
    public async Task Settings_ShowBenchmarkIsOffByDefault_ShowsTheChosenLineWhenOn_AndBadValuesAre400NamingTheField()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var indicator = await IndicatorAsync(staff, "bench-show", Series);
        var panel = await staff.PostOk("/api/panels", new { title = "Shown", startsOn = "2020-01-15", targetPeriods = "2020-2021" });
        var panelId = (int)panel["id"]!;
        Assert.False((bool)panel["settings"]!["showBenchmarkToExperts"]!);
        Assert.Equal(0.05, (double)panel["settings"]!["relationTolerance"]!);

        foreach (var (settings, field) in new (object, string)[]
        {
            (new { expertBenchmark = "arima" }, "settings.expertBenchmark"),
            (new { benchmarkWindow = 0 }, "settings.benchmarkWindow"),
            (new { relationTolerance = 5.0 }, "settings.relationTolerance"),
        })
        {
            var response = await staff.PutAsJsonAsync($"/api/panels/{panelId}", new { title = "Shown", startsOn = "2020-01-15", targetPeriods = "2020-2021", settings });
            Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
            Assert.NotNull(JsonNode.Parse(await response.Content.ReadAsStringAsync())!["errors"]![field]);
        }

        await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "Index", format = "Point" });
        var e = (int)(await staff.PostOk("/api/experts", new { name = "S1", email = "s1@bench.example" }))["id"]!;
        var token = (string)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = e, sendInvitation = false }))["token"]!;
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var expert = await StaffPages.ExpertClientAsync(app, token);
        Assert.DoesNotContain("statistical benchmark", await expert.GetStringAsync("/expert"), StringComparison.Ordinal);

        // The setting can change while the panel runs only through the database here (the API edits drafts): set it directly.
        await app.WithDbAsync(async db =>
        {
            var p = await db.Panels.FindAsync(panelId);
            p!.Settings.ShowBenchmarkToExperts = true;
            p.Settings.ExpertBenchmark = "drift";
            await db.SaveChangesAsync();
        });
        var html = await expert.GetStringAsync("/expert");
        Assert.Contains("statistical benchmark: Random walk with drift", html, StringComparison.Ordinal);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteBenchmarkTests(SqliteFixture fixture) : BenchmarkTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresBenchmarkTests(PostgresFixture fixture) : BenchmarkTests(fixture);
