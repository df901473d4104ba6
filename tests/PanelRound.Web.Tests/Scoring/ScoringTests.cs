using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.VisualBasic.FileIO;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Tests.Infrastructure;
using Xunit.Abstractions;

namespace PanelRound.Web.Tests.Scoring;

/// <summary>
/// Outcomes, the scorecard, track-record weights and past-panel imports through the API, each
/// figure checked against a recomputation from the source files with plain arithmetic
/// (definitions of Hyndman &amp; Koehler 2006: error = forecast − outcome; MAE = mean |e|; mean
/// error = mean e; scaled error = e / in-sample MAE of the one-step naive forecast).
/// </summary>
public abstract class ScoringTests(IDatabaseFixture fixture, ITestOutputHelper output) : ProviderTests(fixture)
{
    private static readonly string DemoFolder = Path.Combine(AppContext.BaseDirectory, "demo-data");

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    // ---------- Independent readers and arithmetic (no project code) ----------

    private static List<Dictionary<string, string>> ReadCsv(string text)
    {
        using var parser = new TextFieldParser(new StringReader(text)) { TextFieldType = FieldType.Delimited, HasFieldsEnclosedInQuotes = true };
        parser.SetDelimiters(",");
        var headers = parser.ReadFields()!;
        var rows = new List<Dictionary<string, string>>();
        while (!parser.EndOfData)
        {
            var fields = parser.ReadFields()!;
            rows.Add(headers.Select((h, i) => (h, v: i < fields.Length ? fields[i] : "")).ToDictionary(x => x.h, x => x.v));
        }
        return rows;
    }

    private static double? Num(Dictionary<string, string> row, string column) =>
        row.TryGetValue(column, out var v) && v.Length > 0 ? double.Parse(v, Inv) : null;

    /// <summary>One final-round forecast against its outcome, recomputed from the files.</summary>
    private sealed record Recomputed(string Expert, double Point, double? P10, double? P90, double Outcome, double Scale);

    private sealed record Figures(int N, double Mae, double MeanError, double Rmse, double ScaledMae, double ScaledMeanError, int NRange, double? Coverage);

    private static Dictionary<string, Figures> PerExpert(IEnumerable<Recomputed> items) =>
        items.GroupBy(i => i.Expert).ToDictionary(g => g.Key, g =>
        {
            var e = g.Select(i => i.Point - i.Outcome).ToList();
            var ranges = g.Where(i => i.P10 is not null).ToList();
            return new Figures(
                e.Count, e.Average(Math.Abs), e.Average(), Math.Sqrt(e.Average(x => x * x)),
                g.Average(i => Math.Abs(i.Point - i.Outcome) / i.Scale), g.Average(i => (i.Point - i.Outcome) / i.Scale),
                ranges.Count, ranges.Count == 0 ? null : ranges.Count(i => i.P10 <= i.Outcome && i.Outcome <= i.P90) / (double)ranges.Count);
        });

    /// <summary>The in-sample MAE of the one-step naive forecast (Hyndman &amp; Koehler 2006, section 3.4) of the values of the years before a year.</summary>
    private static double NaiveScale(IReadOnlyDictionary<int, double> series, int beforeYear)
    {
        var values = series.Where(kv => kv.Key < beforeYear).OrderBy(kv => kv.Key).Select(kv => kv.Value).ToList();
        return values.Zip(values.Skip(1), (a, b) => Math.Abs(b - a)).Average();
    }

    private static Dictionary<string, JsonNode> ExpertsOf(JsonNode scorecard) =>
        scorecard["experts"]!.AsArray().ToDictionary(e => (string)e!["expert"]!, e => e!);


    // ---------- The demo ----------

    [SkippableFact]
    public async Task Demo_Scorecard_EqualsRecomputationFromTheDemoFiles_AndTheTraitsShow()
    {
        var app = await StartDemoAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var scorecard = await reviewer.GetOk("/api/scorecard");

        // Recompute from demo-data: final round of each concluded panel, against observations.csv.
        var structure = JsonNode.Parse(File.ReadAllText(Path.Combine(DemoFolder, "panels.json")))!;
        var concluded = structure["panels"]!.AsArray().Where(p => (bool)p!["concluded"]!).ToDictionary(
            p => (string)p!["key"]!,
            p => (Start: DateOnly.Parse((string)p!["startsOn"]!, Inv), Final: p["rounds"]!.AsArray().Max(r => (int)r!["number"]!)));
        // Annual observations only: the quarterly ones belong to the running panel's calibration questions.
        var observations = ReadCsv(File.ReadAllText(Path.Combine(DemoFolder, "observations.csv"))).Where(o => !o["period"].Contains('Q', StringComparison.Ordinal))
            .GroupBy(o => o["indicator"]).ToDictionary(g => g.Key, g => g.ToDictionary(o => int.Parse(o["period"], Inv), o => Num(o, "value")!.Value));
        var items = ReadCsv(File.ReadAllText(Path.Combine(DemoFolder, "estimates.csv")))
            .Where(e => concluded.TryGetValue(e["panel"], out var p) && int.Parse(e["round"], Inv) == p.Final
                && observations[e["indicator"]].ContainsKey(int.Parse(e["target_period"], Inv)))
            .Select(e => new Recomputed(
                e["expert"], Num(e, "value") ?? Num(e, "p50")!.Value, Num(e, "p10"), Num(e, "p90"),
                observations[e["indicator"]][int.Parse(e["target_period"], Inv)],
                NaiveScale(observations[e["indicator"]], concluded[e["panel"]].Start.Year)))
            .ToList();
        Assert.NotEmpty(items);
        var expected = PerExpert(items);
        var shown = ExpertsOf(scorecard);
        Assert.Subset(shown.Keys.ToHashSet(), expected.Keys.ToHashSet());
        Assert.All(shown.Where(s => !expected.ContainsKey(s.Key)), s => Assert.Equal(0, (int)s.Value["n"]!));
        foreach (var (key, f) in expected)
        {
            var s = shown[key];
            Assert.Equal(f.N, (int)s["n"]!);
            Assert.Equal(f.Mae, (double)s["mae"]!, 9);
            Assert.Equal(f.MeanError, (double)s["meanError"]!, 9);
            Assert.Equal(f.Rmse, (double)s["rmse"]!, 9);
            Assert.Equal(f.ScaledMae, (double)s["scaledMae"]!, 9);
            Assert.Equal(f.NRange, (int)s["nRange"]!);
            if (f.Coverage is { } c)
            {
                Assert.Equal(c, (double)s["coverage"]!, 9);
            }
        }

        // The demo's invented traits show.
        Assert.True(expected["EXP-01"].ScaledMeanError > 0 && (double)shown["EXP-01"]["meanError"]! > 0, "The optimist over-forecasts.");
        Assert.Equal("OverForecasts", (string)shown["EXP-01"]["bias"]!);
        Assert.True((double)shown["EXP-02"]["meanError"]! < 0, "The pessimist under-forecasts.");
        Assert.Equal("UnderForecasts", (string)shown["EXP-02"]["bias"]!);
        Assert.True((double)shown["EXP-04"]["coverage"]! < 0.5, "The over-confident expert's P10-P90 ranges miss most outcomes.");
        var byScaledMae = shown.Values.Where(s => (bool)s["ranked"]!).OrderBy(s => (double)s["scaledMae"]!).Select(s => (string)s["expert"]!).ToList();
        Assert.Contains("EXP-03", byScaledMae.Take(3));

        // The no-change forecast: one item per question-period, the last observation before the panel's start.
        Assert.Equal(concluded.Count * 6 * 3, (int)scorecard["naive"]!["n"]!);
        Assert.Equal(concluded.Count * 6 * 3, (int)scorecard["consensus"]!["n"]!);

        // The reviewer pages render, with the caution.
        foreach (var page in new[] { "/Staff/Scorecard", "/Staff/Scorecard/Backtest", "/Staff/Outcomes" })
        {
            var html = await reviewer.GetStringAsync(page);
            Assert.Contains("not investment advice", html, StringComparison.Ordinal);
        }
        var ids = await app.WithDbAsync(async db => (
            Expert: await db.Experts.Where(e => e.ExternalKey == "EXP-04").Select(e => e.Id).SingleAsync(),
            Panel: await db.Panels.Where(p => p.ExternalKey == "calderport-2019").Select(p => p.Id).SingleAsync()));
        Assert.Contains("<svg", await reviewer.GetStringAsync($"/Staff/Scorecard/Expert/{ids.Expert}"), StringComparison.Ordinal);
        Assert.Contains("No-change", await reviewer.GetStringAsync($"/Staff/Scorecard/Panel/{ids.Panel}"), StringComparison.Ordinal);
    }

    // ---------- Imports ----------

    /// <summary>A generated firm history: 5 panels x 2 indicators (one Point, one Range) x 2 periods x 2 rounds x 25 experts = 1,000 forecasts by 100 experts.</summary>
    private static (string Forecasts, string Observations) GeneratedHistory()
    {
        var random = new Random(20240517);
        var price = new Dictionary<int, double>();
        var rent = new Dictionary<int, double>();
        double p = 3000, r = 20;
        for (var y = 2008; y <= 2024; y++)
        {
            p += 40 + 120 * random.NextDouble();
            r += -0.5 + 1.5 * random.NextDouble();
            price[y] = Math.Round(p, 0);
            rent[y] = Math.Round(r, 2);
        }
        var f = new StringBuilder("panel,panel_start,indicator,unit,target_period,expert,round,value,p10,p50,p90,note\n");
        for (var panel = 0; panel < 5; panel++)
        {
            var startYear = 2014 + 2 * panel;
            for (var j = 0; j < 25; j++)
            {
                var e = (20 * panel + j) % 100;
                var bias = (e % 7 - 3) * 0.02;
                for (var round = 1; round <= 2; round++)
                {
                    foreach (var year in new[] { startYear + 1, startYear + 2 })
                    {
                        var noise = 1 + bias + 0.03 * (random.NextDouble() - 0.5) / round;
                        f.Append(Inv, $"past-{panel},{startYear}-03-01,price-x,EUR/m²,{year},E{e:000},{round},{Math.Round(price[year] * noise, 1)},,,,generated\n");
                        var mid = Math.Round(rent[year] * noise, 2);
                        var width = 0.5 + e % 5 * 0.4;
                        f.Append(Inv, $"past-{panel},{startYear}-03-01,rent-x,EUR/m²/month,{year},E{e:000},{round},,{mid - width},{mid},{mid + width * 1.1},generated\n");
                    }
                }
            }
        }
        var o = new StringBuilder("indicator,period,value,source\n");
        foreach (var (y, v) in price)
        {
            o.Append(Inv, $"price-x,{y},{v},generated series\n");
        }
        foreach (var (y, v) in rent)
        {
            o.Append(Inv, $"rent-x,{y},{v},\"generated, rent\"\n");
        }
        return (f.ToString(), o.ToString());
    }

    private static Dictionary<string, Figures> RecomputeFromFiles(string forecasts, string observations)
    {
        var obs = ReadCsv(observations).GroupBy(o => o["indicator"]).ToDictionary(g => g.Key, g => g.ToDictionary(o => int.Parse(o["period"], Inv), o => Num(o, "value")!.Value));
        var rows = ReadCsv(forecasts);
        var finalRound = rows.GroupBy(r => r["panel"]).ToDictionary(g => g.Key, g => g.Max(r => int.Parse(r["round"], Inv)));
        return PerExpert(rows
            .Where(r => int.Parse(r["round"], Inv) == finalRound[r["panel"]] && obs[r["indicator"]].ContainsKey(int.Parse(r["target_period"], Inv)))
            .Select(r => new Recomputed(r["expert"], Num(r, "value") ?? Num(r, "p50")!.Value, Num(r, "p10"), Num(r, "p90"),
                obs[r["indicator"]][int.Parse(r["target_period"], Inv)],
                NaiveScale(obs[r["indicator"]], DateOnly.Parse(r["panel_start"], Inv).Year))));
    }

    [SkippableFact]
    public async Task Import_100Experts1000Forecasts_ScorecardEqualsRecomputationFromTheFiles()
    {
        var app = await StartAsync();
        var facilitator = await app.StaffClientAsync();
        var (forecasts, observations) = GeneratedHistory();
        Assert.Equal(1000, forecasts.Count(c => c == '\n') - 1);

        var watch = Stopwatch.StartNew();
        var (status, body, text) = await facilitator.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        var imported = watch.Elapsed;
        Assert.True(status == HttpStatusCode.OK, text);
        var scorecard = await facilitator.GetOk("/api/scorecard");
        var total = watch.Elapsed;
        output.WriteLine(FormattableString.Invariant(
            $"{Provider}: import of 100 experts x 1,000 forecasts {imported.TotalSeconds:0.00} s; then GET /api/scorecard {(total - imported).TotalSeconds:0.00} s; total {total.TotalSeconds:0.00} s."));

        Assert.Equal(5, (int)body!["panels"]!);
        Assert.Equal(1000, (int)body["estimates"]!);
        Assert.Equal(100, (int)body["expertsCreated"]!);
        var expected = RecomputeFromFiles(forecasts, observations);
        var shown = ExpertsOf(scorecard);
        Assert.Equal(100, expected.Count);
        Assert.Equal(expected.Keys.Order(), shown.Keys.Order());
        foreach (var (key, f) in expected)
        {
            Assert.Equal(f.N, (int)shown[key]["n"]!);
            Assert.Equal(f.Mae, (double)shown[key]["mae"]!, 9);
            Assert.Equal(f.MeanError, (double)shown[key]["meanError"]!, 9);
            Assert.Equal(f.ScaledMae, (double)shown[key]["scaledMae"]!, 9);
            Assert.Equal(f.Coverage!.Value, (double)shown[key]["coverage"]!, 9);
            // Every figure has its n: the scaled interval score and the range weight rest on the range items (all scaled).
            Assert.Equal(f.NRange, (int)shown[key]["nRangeScaled"]!);
            Assert.Equal(f.NRange, (int)shown[key]["rangeWeightN"]!);
            Assert.Equal(f.N, (int)shown[key]["weightN"]!);
        }
        // The consensus is scored like an expert: one item per question-period (5 panels x 2 indicators x 2 periods).
        Assert.Equal(20, (int)scorecard["consensus"]!["n"]!);
        Assert.Equal(20, (int)scorecard["naive"]!["n"]!);

        // Importing the same panels again is refused, and changes nothing.
        var again = await facilitator.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.Equal(HttpStatusCode.BadRequest, again.Status);
        Assert.Equal(1000, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task Import_OneBadRow_RejectsTheWholeImportWithARowLevelErrorAndChangesNothing()
    {
        var app = await StartAsync();
        var facilitator = await app.StaffClientAsync();
        var (forecasts, observations) = GeneratedHistory();
        var lines = forecasts.Split('\n').ToList();
        // Data row 12 (file line 13; rows are numbered after the header, as in every CSV report of the app): an unreadable number.
        lines[12] = "past-0,2014-03-01,price-x,EUR/m²,2015,E000,1,12;5,,,,generated";
        var obsLines = observations.Split('\n').ToList();
        obsLines[3] = "price-x,2011Q9,1,bad period";

        var (status, body, text) = await facilitator.PostCsvFiles("/api/imports/past-panels", ("forecasts", string.Join('\n', lines)), ("observations", string.Join('\n', obsLines)));
        Assert.True(status == HttpStatusCode.BadRequest, text);
        var errors = body!["errors"]!.AsObject();
        Assert.True(errors.ContainsKey("forecasts row 12"), text);
        Assert.True(errors.ContainsKey("observations row 3"), text);
        Assert.Equal(2, errors.Count);
        var counts = await app.WithDbAsync(async db => new[]
        {
            await db.Panels.CountAsync(), await db.Estimates.CountAsync(), await db.Experts.CountAsync(),
            await db.Indicators.CountAsync(), await db.Observations.CountAsync(), await db.AuditEvents.CountAsync(a => a.Action.Contains("import")),
        });
        Assert.All(counts, c => Assert.Equal(0, c));
    }

    // ---------- Outcomes ----------

    [SkippableFact]
    public async Task OutcomeCorrection_ChangesTheScores_KeepsHistory_AndIsAudited()
    {
        var app = await StartAsync();
        var facilitator = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var (forecasts, observations) = GeneratedHistory();
        var (status, _, text) = await facilitator.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.OK, text);
        var before = ExpertsOf(await reviewer.GetOk("/api/scorecard?indicator=price-x"));

        // The reviewer corrects the 2019 price (past-2 asked about it): the scores follow the new value.
        await reviewer.PostOk("/api/outcomes", new { indicator = "price-x", period = "2019", value = 9999.0, source = "revised bulletin", observedOn = "2020-03-01" }, HttpStatusCode.OK);
        var corrected = observations.Split('\n').Select(l => l.StartsWith("price-x,2019,", StringComparison.Ordinal) ? "price-x,2019,9999,revised bulletin" : l);
        var expected = RecomputeFromFiles(string.Join('\n', forecasts.Split('\n').Where(l => !l.Contains(",rent-x,", StringComparison.Ordinal))), string.Join('\n', corrected));
        var after = ExpertsOf(await reviewer.GetOk("/api/scorecard?indicator=price-x"));
        var changed = 0;
        foreach (var (key, f) in expected)
        {
            Assert.Equal(f.Mae, (double)after[key]["mae"]!, 9);
            Assert.Equal(f.MeanError, (double)after[key]["meanError"]!, 9);
            changed += Math.Abs((double)after[key]["mae"]! - (double)before[key]["mae"]!) > 1e-9 ? 1 : 0;
        }
        Assert.Equal(25, changed);

        var (history, audit) = await app.WithDbAsync(async db => (
            await db.Observations.Where(o => o.Indicator!.Key == "price-x" && o.Period == "2019").OrderBy(o => o.Id).ToListAsync(),
            await db.AuditEvents.Where(a => a.Action == "observation.corrected").ToListAsync()));
        Assert.Equal(2, history.Count);
        Assert.NotNull(history[0].SupersededAt);
        Assert.Null(history[1].SupersededAt);
        Assert.Equal(9999, history[1].Value);
        var entry = Assert.Single(audit);
        Assert.Contains("9999", entry.Details!, StringComparison.Ordinal);
        Assert.StartsWith("api-key:", entry.Actor, StringComparison.Ordinal);

        // A bad CSV row of outcomes rejects the whole file.
        var (badStatus, badBody, badText) = await reviewer.PostCsvFiles("/api/outcomes/csv", ("file", "indicator,period,value\nprice-x,2025,5000\nnope,2025,1\n"));
        Assert.True(badStatus == HttpStatusCode.BadRequest, badText);
        Assert.True(badBody!["errors"]!.AsObject().ContainsKey("row 2"), badText);
        Assert.Equal(0, await app.WithDbAsync(db => db.Observations.CountAsync(o => o.Period == "2025")));
    }

    // ---------- Track-record weights ----------

    /// <summary>Two past panels, point question, five experts: A and B accurate, C, D and E far off. Outcome 2021 is left out of the observations.</summary>
    private static (string Forecasts, string Observations) TrackRecordHistory()
    {
        var series = Enumerable.Range(2012, 9).ToDictionary(y => y, y => 100.0 + 3 * (y - 2012) + (y % 2 == 0 ? 1 : -1));
        var offsets = new Dictionary<string, double> { ["A"] = 0.5, ["B"] = -0.8, ["C"] = 30, ["D"] = -28, ["E"] = 25 };
        var f = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value\n");
        foreach (var (panel, start) in new[] { ("tr-1", 2018), ("tr-2", 2019) })
        {
            foreach (var (expert, off) in offsets)
            {
                foreach (var year in new[] { 2020, 2021 })
                {
                    var truth = series.GetValueOrDefault(year, 130);
                    f.Append(Inv, $"{panel},{start}-03-01,{start}-04-15,idx-a,points,{year},{expert},1,{truth + off}\n");
                }
            }
        }
        var o = new StringBuilder("indicator,period,value,observed_on\n");
        foreach (var (y, v) in series)
        {
            o.Append(Inv, $"idx-a,{y},{v},{y + 1}-02-15\n");
        }
        return (f.ToString(), o.ToString());
    }

    [SkippableFact]
    public async Task TrackRecordConsensus_DiffersFromEqual_EqualsTheFormula_AndIgnoresOutcomesRecordedAfterTheClose()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var (forecasts, observations) = TrackRecordHistory();
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.OK, text);

        // A live panel weighted by track record, answered by the five experts: the accurate ones answer high.
        var indicatorId = (int)(await staff.GetOk("/api/indicators")).AsArray().Single(i => (string)i!["key"]! == "idx-a")!["id"]!;
        var today = DateOnly.FromDateTime(DateTime.UtcNow);
        var panelId = (int)(await staff.PostOk("/api/panels", new
        {
            title = "Live", startsOn = today.ToString("yyyy-MM-dd", Inv), targetPeriods = (today.Year + 1).ToString(Inv), settings = new { weighting = "TrackRecord" },
        }))["id"]!;
        var questionId = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId, label = "Index", format = "Point" }))["id"]!;
        var roster = (await staff.GetOk("/api/experts")).AsArray().ToDictionary(e => (string?)e!["externalKey"] ?? "", e => (int)e!["id"]!);
        var answers = new Dictionary<string, double> { ["A"] = 120, ["B"] = 125, ["C"] = 100, ["D"] = 101, ["E"] = 102 };
        var tokens = new Dictionary<string, string>();
        foreach (var key in answers.Keys)
        {
            tokens[key] = (string)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = roster[key], sendInvitation = false }))["token"]!;
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var expertClient = app.Client();
        foreach (var (key, value) in answers)
        {
            await expertClient.WithExpertToken(tokens[key]).PostOk($"/api/expert/panels/{panelId}/estimates", new
            {
                draft = false,
                answers = new[] { new { questionId, confidence = 3, rationale = "view", periods = new[] { new { period = (today.Year + 1).ToString(Inv), value } } } },
            }, HttpStatusCode.OK);
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        var published = (await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK)).AsArray().Single()!;

        var compare = await staff.GetOk($"/api/panels/{panelId}/consensus/compare");
        var target = compare["targets"]!.AsArray().Single()!;
        var equal = (double)target["equal"]!["value"]!;
        var weighted = (double)target["trackRecord"]!["value"]!;
        Assert.NotEqual(equal, weighted, 6);
        Assert.True(weighted > equal, "The accurate experts answered high, so their weight pulls the consensus up.");
        Assert.Equal(weighted, (double)published["value"]!, 9);

        // The weights equal the shrinkage formula recomputed from the files: pooled scaled |error| over the
        // final-round items with an outcome (2020 only), e~ = (n e + k e_pool) / (n + k), k = 5, weight ∝ 1 / e~.
        var scale = NaiveScale(ReadCsv(observations).ToDictionary(o => int.Parse(o["period"], Inv), o => Num(o, "value")!.Value), 2018);
        var scale2 = NaiveScale(ReadCsv(observations).ToDictionary(o => int.Parse(o["period"], Inv), o => Num(o, "value")!.Value), 2019);
        var truth2020 = Num(ReadCsv(observations).Single(o => o["period"] == "2020"), "value")!.Value;
        var rows = ReadCsv(forecasts).Where(r => r["target_period"] == "2020").ToList();
        var own = rows.GroupBy(r => r["expert"]).ToDictionary(g => g.Key, g => g.Select(r => Math.Abs(Num(r, "value")!.Value - truth2020) / (r["panel"] == "tr-1" ? scale : scale2)).ToList());
        var pool = own.Values.SelectMany(x => x).Average();
        var shrunk = own.ToDictionary(kv => kv.Key, kv => (kv.Value.Sum() + 5 * pool) / (kv.Value.Count + 5));
        var sum = shrunk.Values.Sum(e => 1 / e);
        var members = compare["weights"]!["point"]!["members"]!.AsArray();
        Assert.Null(compare["weights"]!["range"]);
        var keyOfExpert = roster.ToDictionary(kv => kv.Value, kv => kv.Key);
        var keyOfCode = (await staff.GetOk($"/api/panels/{panelId}/members")).AsArray().ToDictionary(m => (string)m!["panelCode"]!, m => keyOfExpert[(int)m!["expertId"]!]);
        Assert.Equal(5, members.Count);
        foreach (var m in members)
        {
            Assert.Null(m!["expertKey"]);
            var key = keyOfCode[(string)m["panelCode"]!];
            Assert.Equal(2, (int)m["scoredForecasts"]!);
            Assert.Equal(1 / shrunk[key] / sum, (double)m["weight"]!, 9);
        }

        // No look-ahead: the 2021 outcome, recorded after the panel closed, does not change its weights ...
        var concludedAt = await app.WithDbAsync(db => db.Panels.Where(p => p.Id == panelId).Select(p => p.ConcludedAt!.Value).SingleAsync());
        async Task<IReadOnlyDictionary<int, double>> WeightsAsync(DateTime asOf)
        {
            using var scope = app.Services.CreateScope();
            return (await scope.ServiceProvider.GetRequiredService<IMemberWeights>().ForPanelAsync(panelId, asOf))!.Point!;
        }
        var atClose = await WeightsAsync(concludedAt);
        await staff.PostOk("/api/outcomes", new { indicator = "idx-a", period = "2021", value = 160.0, source = "late bulletin" }, HttpStatusCode.OK);
        Assert.Equal(atClose.OrderBy(kv => kv.Key), (await WeightsAsync(concludedAt)).OrderBy(kv => kv.Key));
        var compareAgain = await staff.GetOk($"/api/panels/{panelId}/consensus/compare");
        Assert.Equal(weighted, (double)compareAgain["targets"]![0]!["trackRecord"]!["value"]!, 12);

        // ... while leaking it (weights as of a later day) would change them: the check can fail.
        var leaked = await WeightsAsync(concludedAt.AddDays(1));
        Assert.Contains(leaked, kv => Math.Abs(kv.Value - atClose[kv.Key]) > 1e-6);
    }
    // ---------- Shared set-up of live panels (through the API, as a facilitator and the experts would) ----------

    private static async Task<int> IndicatorWithSeriesAsync(HttpClient staff, string key, IReadOnlyDictionary<int, double> series)
    {
        var id = (int)(await staff.PostOk("/api/indicators", new { key, name = key, unitLabel = "points", decimals = 2 }))["id"]!;
        var rows = series.Select(kv => new { period = kv.Key.ToString(Inv), value = kv.Value, source = "test series", observedOn = $"{kv.Key + 1}-02-15" }).ToArray();
        await staff.PostOk($"/api/indicators/{id}/observations", rows, HttpStatusCode.OK);
        return id;
    }

    private static async Task<Dictionary<string, int>> ExpertsAsync(HttpClient staff, params (string Name, string Email, string? ExternalKey)[] experts)
    {
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var (name, email, externalKey) in experts)
        {
            ids[name] = (int)(await staff.PostOk("/api/experts", new { name, email, externalKey }))["id"]!;
        }
        return ids;
    }

    /// <summary>A panel with one question per (indicator, format), every expert a member; round 1 open.</summary>
    private static async Task<(int PanelId, List<int> Questions, Dictionary<string, string> Tokens, Dictionary<string, int> Memberships)> LivePanelAsync(
        HttpClient staff, string startsOn, string period, (int IndicatorId, string Format)[] questions, IReadOnlyDictionary<string, int> experts, string weighting = "Equal")
    {
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Live " + Guid.NewGuid().ToString("N")[..6], startsOn, targetPeriods = period, settings = new { weighting } }))["id"]!;
        var questionIds = new List<int>();
        foreach (var (indicatorId, format) in questions)
        {
            questionIds.Add((int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId, label = $"Q{questionIds.Count + 1}", format }))["id"]!);
        }
        var tokens = new Dictionary<string, string>(StringComparer.Ordinal);
        var memberships = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var (name, expertId) in experts)
        {
            var link = await staff.PostOk($"/api/panels/{panelId}/members", new { expertId, sendInvitation = false });
            tokens[name] = (string)link["token"]!;
            memberships[name] = (int)link["membershipId"]!;
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        return (panelId, questionIds, tokens, memberships);
    }

    private static async Task SubmitAsync(TestApp app, string token, int panelId, string period, params (int QuestionId, double? Value, double? P10, double? P50, double? P90)[] answers)
    {
        await app.Client().WithExpertToken(token).PostOk($"/api/expert/panels/{panelId}/estimates", new
        {
            draft = false,
            answers = answers.Select(a => new
            {
                questionId = a.QuestionId, confidence = 3, rationale = "view",
                periods = new[] { new { period, value = a.Value, p10 = a.P10, p50 = a.P50, p90 = a.P90 } },
            }).ToArray(),
        }, HttpStatusCode.OK);
    }

    /// <summary>The weighted median as documented for the consensus: each sorted value at the midpoint of its weight mass, positions rescaled to [0, 1], linear interpolation at 0.5 (no ties).</summary>
    private static double WeightedMedian(IReadOnlyList<double> values, IReadOnlyList<double> weights)
    {
        var sorted = values.Select((v, i) => (V: v, W: weights[i])).OrderBy(p => p.V).ToArray();
        var total = sorted.Sum(p => p.W);
        var w = sorted.Select(p => p.W / total).ToArray();
        var m = w.Length;
        var u = new double[m];
        var cumulative = 0.0;
        for (var k = 0; k < m; k++)
        {
            cumulative += w[k];
            u[k] = (cumulative - (w[k] / 2) - (w[0] / 2)) / (1 - (w[0] / 2) - (w[m - 1] / 2));
        }
        for (var k = 0; k < m - 1; k++)
        {
            if (u[k] <= 0.5 && 0.5 <= u[k + 1])
            {
                return sorted[k].V + ((0.5 - u[k]) / (u[k + 1] - u[k]) * (sorted[k + 1].V - sorted[k].V));
            }
        }
        throw new InvalidOperationException("No bracket for the median.");
    }

    private static double Median(IEnumerable<double> values)
    {
        var x = values.Order().ToArray();
        return x.Length % 2 == 1 ? x[x.Length / 2] : (x[(x.Length / 2) - 1] + x[x.Length / 2]) / 2;
    }

    /// <summary>Shrinkage weights (k = 5) from per-expert lists of scaled errors: e~ = (Σe + k·pool) / (n + k), w ∝ 1 / e~.</summary>
    private static Dictionary<string, double> ShrunkWeights(IReadOnlyDictionary<string, List<double>> errors)
    {
        var pool = errors.Values.SelectMany(x => x).Average();
        var inverse = errors.ToDictionary(kv => kv.Key, kv => 1 / ((kv.Value.Sum() + (5 * pool)) / (kv.Value.Count + 5)));
        var sum = inverse.Values.Sum();
        return inverse.ToDictionary(kv => kv.Key, kv => kv.Value / sum);
    }

    private static readonly string[] FiveExperts = ["A", "B", "C", "D", "E"];

    private static Dictionary<int, double> SeriesA() => Enumerable.Range(2010, 12).ToDictionary(y => y, y => 100.0 + (3 * (y - 2010)) + (y % 2 == 0 ? 1 : -1));

    private static Dictionary<int, double> SeriesB() => Enumerable.Range(2010, 10).ToDictionary(y => y, y => 50.0 + (2 * (y - 2010)) + (y % 3 == 0 ? 1.5 : -0.5));

    // ---------- Revoked links count as in the consensus ----------

    [SkippableFact]
    public async Task RevokedAfterTheClose_IsScoredLikeTheConsensusCountsIt_RevokedWhileOpen_IsNot()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var series = SeriesA();
        var indicatorId = await IndicatorWithSeriesAsync(staff, "idx-a", series);
        var experts = await ExpertsAsync(staff, ("A", "a@example.org", "A"), ("B", "b@example.org", "B"), ("C", "c@example.org", "C"), ("D", "d@example.org", "D"));
        var (panelId, questions, tokens, memberships) = await LivePanelAsync(staff, "2020-01-01", "2021", [(indicatorId, "Point")], experts);
        var answers = new Dictionary<string, double> { ["A"] = 131, ["B"] = 127, ["C"] = 140, ["D"] = 90 };
        foreach (var (key, value) in answers)
        {
            await SubmitAsync(app, tokens[key], panelId, "2021", (questions[0], value, null, null, null));
        }
        await staff.PostOk($"/api/panels/{panelId}/members/{memberships["D"]}/revoke", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelId}/members/{memberships["C"]}/revoke", new { }, HttpStatusCode.OK);
        var published = (await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK)).AsArray().Single()!;

        // The consensus counts A, B and C (C was revoked after the round closed), not D.
        Assert.Equal(3, (int)published["n"]!);
        Assert.Equal(Median([131, 127, 140]), (double)published["value"]!, 9);

        // The scorecard counts the same answers.
        var scorecard = ExpertsOf(await reviewer.GetOk("/api/scorecard"));
        Assert.Equal(["A", "B", "C"], scorecard.Where(e => (int)e.Value["n"]! > 0).Select(e => e.Key).Order());
        foreach (var key in new[] { "A", "B", "C" })
        {
            Assert.Equal(Math.Abs(answers[key] - series[2021]), (double)scorecard[key]["mae"]!, 9);
        }
    }

    // ---------- Compare with nobody on record ----------

    [SkippableFact]
    public async Task Compare_OnAFreshDatabaseWithOneClosedRound_IsEqualWeightsWithNullErrors_NotAServerError()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var indicatorId = await IndicatorWithSeriesAsync(staff, "idx-a", SeriesA());
        var experts = await ExpertsAsync(staff, ("A", "a@example.org", null), ("B", "b@example.org", null), ("C", "c@example.org", null));
        var next = (DateTime.UtcNow.Year + 1).ToString(Inv);
        var (panelId, questions, tokens, _) = await LivePanelAsync(staff, DateTime.UtcNow.ToString("yyyy-MM-dd", Inv), next, [(indicatorId, "Point")], experts, "TrackRecord");
        foreach (var (key, value) in new Dictionary<string, double> { ["A"] = 140, ["B"] = 150, ["C"] = 146 })
        {
            await SubmitAsync(app, tokens[key], panelId, next, (questions[0], value, null, null, null));
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);

        var compare = await staff.GetOk($"/api/panels/{panelId}/consensus/compare");
        var point = compare["weights"]!["point"]!;
        Assert.Null(point["poolMeanError"]);
        Assert.Equal(0, (int)compare["weights"]!["historyItems"]!);
        Assert.All(point["members"]!.AsArray(), m =>
        {
            Assert.Null(m!["shrunkError"]);
            Assert.Null(m["pooledScaledError"]);
            Assert.Equal(1.0 / 3, (double)m["weight"]!, 12);
        });
        var target = compare["targets"]!.AsArray().Single()!;
        Assert.Equal(146, (double)target["equal"]!["value"]!, 12);
        Assert.Equal(146, (double)target["trackRecord"]!["value"]!, 12);
        Assert.Equal(0, (double)target["difference"]!, 12);
    }

    // ---------- Validation of outcomes and observations ----------

    [SkippableFact]
    public async Task ObservedOnAndMagnitude_AreCheckedWhereverAccepted_AndABadInputSavesNothing()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var indicatorId = (int)(await staff.PostOk("/api/indicators", new { key = "idx-a", name = "idx-a", unitLabel = "points", decimals = 2 }))["id"]!;
        var today = DateOnly.FromDateTime(DateTime.UtcNow);
        var thisYear = today.Year.ToString(Inv);

        async Task ExpectField(HttpClient client, string url, object body, string field)
        {
            var (status, problem) = await client.Post(url, body);
            Assert.True(status == HttpStatusCode.BadRequest, $"{url}: {(int)status} {problem}");
            Assert.True(problem!["errors"]!.AsObject().ContainsKey(field), problem.ToJsonString());
        }

        // Outcomes: known before the period ended, known after today, a period not yet ended, a value beyond 1e12.
        await ExpectField(reviewer, "/api/outcomes", new { indicator = "idx-a", period = "2021", value = 5.0, observedOn = "2021-06-30" }, "observedOn");
        await ExpectField(reviewer, "/api/outcomes", new { indicator = "idx-a", period = "2021", value = 5.0, observedOn = today.AddDays(1).ToString("yyyy-MM-dd", Inv) }, "observedOn");
        await ExpectField(reviewer, "/api/outcomes", new { indicator = "idx-a", period = thisYear, value = 5.0 }, "period");
        await ExpectField(reviewer, "/api/outcomes", new { indicator = "idx-a", period = "2021", value = 2e12 }, "value");
        var (csvStatus, csvBody, csvText) = await reviewer.PostCsvFiles("/api/outcomes/csv", ("file", "indicator,period,value,observed_on\nidx-a,2020,5,2021-01-10\nidx-a,2021,5,2021-12-30\n"));
        Assert.True(csvStatus == HttpStatusCode.BadRequest, csvText);
        Assert.True(csvBody!["errors"]!.AsObject().ContainsKey("row 2"), csvText);

        // The catalog's observations.
        await ExpectField(staff, $"/api/indicators/{indicatorId}/observations", new[] { new { period = "2021", value = 5.0, observedOn = "2021-12-30" } }, "observations[0].observedOn");
        await ExpectField(staff, $"/api/indicators/{indicatorId}/observations", new[] { new { period = "2021", value = -1e13, observedOn = "2022-01-30" } }, "observations[0].value");

        // Imports: row-level errors in both files.
        var forecasts = "panel,panel_start,indicator,unit,target_period,expert,round,value\nv-1,2019-03-01,idx-a,points,2020,A,1,5000000000000\nv-1,2019-03-01,idx-a,points,2020,B,1,101\n";
        var observations = "indicator,period,value,observed_on\nidx-a,2018,100,2019-02-15\nidx-a,2020,103,2020-11-30\nidx-a,2017,1e13,2018-02-15\n";
        var (status, body, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.BadRequest, text);
        Assert.Equal(["forecasts row 1", "observations row 2", "observations row 3"], body!["errors"]!.AsObject().Select(e => e.Key).Order());

        Assert.Equal(0, await app.WithDbAsync(db => db.Observations.CountAsync()));
        Assert.Equal(0, await app.WithDbAsync(db => db.Panels.CountAsync()));

        // In bounds and on valid days, the same inputs are accepted.
        await reviewer.PostOk("/api/outcomes", new { indicator = "idx-a", period = "2021", value = 1e12, observedOn = "2021-12-31" }, HttpStatusCode.OK);
        Assert.Equal(1, await app.WithDbAsync(db => db.Observations.CountAsync()));
    }

    // ---------- Non-finite figures ----------

    [SkippableFact]
    public async Task Scorecard_WithANonFiniteFigure_ShowsNull_NotAServerError()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var (forecasts, observations) = TrackRecordHistory();
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.OK, text);

        // Data stored before the magnitude bound existed: an answer and a consensus of 1e200, whose squares overflow.
        await app.WithDbAsync(async db =>
        {
            var expertA = await db.Memberships.Where(m => m.Expert!.ExternalKey == "A" && m.Panel!.ExternalKey == "tr-1").Select(m => m.Id).SingleAsync();
            var estimate = await db.Estimates.SingleAsync(e => e.MembershipId == expertA && e.Period == "2020");
            estimate.Value = 1e200;
            var consensus = await db.Consensus.FirstAsync(c => c.Period == "2020");
            (consensus.Value, consensus.Low, consensus.High) = (1e200, 1e200, 1e200);
            await db.SaveChangesAsync();
        });

        var scorecard = await reviewer.GetOk("/api/scorecard");
        var a = ExpertsOf(scorecard)["A"];
        Assert.Equal(2, (int)a["n"]!);
        Assert.Null(a["rmse"]);
        Assert.True(double.IsFinite((double)a["mae"]!));
        Assert.Null(scorecard["consensus"]!["rmse"]);
        await reviewer.GetOk("/api/scorecard/backtest");
        Assert.Contains("not investment advice", await reviewer.GetStringAsync("/Staff/Scorecard"), StringComparison.Ordinal);
    }

    // ---------- Key namespaces ----------

    [SkippableFact]
    public async Task ImportedPanelKeyedLikeAnAppPanel_AndAnExternalKeyEqualToAnotherEmail_NeverCollide()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var series = SeriesA();
        var indicatorId = await IndicatorWithSeriesAsync(staff, "idx-a", series);
        // X2's external key is X1's email: both show as bob@example.org, and are still two experts.
        var experts = await ExpertsAsync(staff, ("X1", "bob@example.org", null), ("X2", "other@example.org", "bob@example.org"), ("X3", "third@example.org", null));
        var (panelId, questions, tokens, _) = await LivePanelAsync(staff, "2020-01-01", "2021", [(indicatorId, "Point")], experts);
        Assert.Equal(1, panelId);
        var answers = new Dictionary<string, double> { ["X1"] = 131, ["X2"] = 120, ["X3"] = 126 };
        foreach (var (key, value) in answers)
        {
            await SubmitAsync(app, tokens[key], panelId, "2021", (questions[0], value, null, null, null));
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK);

        var forecasts = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value\n");
        foreach (var (expert, off) in new[] { ("E1", 2.0), ("E2", -3.0), ("E3", 6.0) })
        {
            forecasts.Append(Inv, $"panel-1,2019-03-01,2019-04-15,idx-a,points,2020,{expert},1,{series[2020] + off}\n");
        }
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts.ToString()));
        Assert.True(status == HttpStatusCode.OK, text);

        var scorecard = await reviewer.GetOk("/api/scorecard");
        Assert.Equal(2, (int)scorecard["panels"]!);
        var lines = scorecard["experts"]!.AsArray().Select(e => e!).ToList();
        var bobs = lines.Where(e => (string)e["expert"]! == "bob@example.org").ToList();
        Assert.Equal(2, bobs.Count);
        Assert.Equal(
            new[] { Math.Abs(answers["X1"] - series[2021]), Math.Abs(answers["X2"] - series[2021]) }.Order(),
            bobs.Select(b => (double)b["mae"]!).Order());
        Assert.All(bobs, b => Assert.Equal(1, (int)b["n"]!));
        Assert.Equal(6, lines.Count);
        Assert.Equal(2, (int)scorecard["consensus"]!["n"]!);

        var backtest = await reviewer.GetOk("/api/scorecard/backtest");
        var panels = backtest["panels"]!.AsArray().Select(p => p!).ToList();
        Assert.Equal(2, panels.Count);
        Assert.All(panels, p => Assert.Equal("panel-1", (string)p["panel"]!));
        Assert.Equal(2, panels.Select(p => (int)p["panelId"]!).Distinct().Count());
        // The app panel closed after the imported one and after its 2020 outcome became known (2021-02-15): it has the import as history.
        var appLine = panels.Single(p => (int)p["panelId"]! == panelId);
        Assert.Equal(3, (int)appLine["historyItems"]!);
        Assert.True((bool)appLine["hasHistory"]!);
        Assert.Contains("panel-1", await reviewer.GetStringAsync("/Staff/Scorecard/Backtest"), StringComparison.Ordinal);
    }

    // ---------- Track-record weights per response format ----------

    /// <summary>Two past Range panels on rent-r: A's P50 is closer than B's, but A's range is far too narrow and misses, while B's covers.</summary>
    private static (string Forecasts, string Observations, Dictionary<int, double> Series) RangeHistory()
    {
        var series = Enumerable.Range(2010, 11).ToDictionary(y => y, y => 20.0 + (0.6 * (y - 2010)) + (y % 2 == 0 ? 0.3 : -0.2));
        var answers = new Dictionary<string, (double Mid, double Below, double Above)>
        {
            ["A"] = (0.3, 0.05, 0.05), ["B"] = (0.6, 0.8, 0.2), ["C"] = (-0.8, 0.5, 0.5), ["D"] = (0.6, 1.0, 0.4), ["E"] = (-1.5, 1.0, 3.0),
        };
        var f = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,p10,p50,p90\n");
        foreach (var (panel, start) in new[] { ("rr-1", 2018), ("rr-2", 2019) })
        {
            foreach (var (expert, a) in answers)
            {
                var mid = series[2020] + a.Mid;
                f.Append(Inv, $"{panel},{start}-03-01,{start}-04-15,rent-r,points,2020,{expert},1,{mid - a.Below},{mid},{mid + a.Above}\n");
            }
        }
        var o = new StringBuilder("indicator,period,value,observed_on\n");
        foreach (var (y, v) in series)
        {
            o.Append(Inv, $"rent-r,{y},{v},{y + 1}-02-15\n");
        }
        return (f.ToString(), o.ToString(), series);
    }

    [SkippableFact]
    public async Task TrackRecordConsensus_UsesIntervalScoreWeightsForRangeQuestions_AndAbsoluteErrorWeightsForPointQuestions()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var (forecasts, observations, series) = RangeHistory();
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.OK, text);

        // Recomputed from the files: scaled |P50 − y| (Point weights) and scaled interval score of [P10, P90] at α = 0.2 (Range weights),
        // IS = (u − l) + (2/α)(l − y)⁺ + (2/α)(y − u)⁺ (Gneiting & Raftery 2007, eq. 43).
        var y2020 = series[2020];
        var rows = ReadCsv(forecasts);
        double ScaleOf(Dictionary<string, string> r) => NaiveScale(series, r["panel"] == "rr-1" ? 2018 : 2019);
        var absolute = rows.GroupBy(r => r["expert"]).ToDictionary(g => g.Key, g => g.Select(r => Math.Abs(Num(r, "p50")!.Value - y2020) / ScaleOf(r)).ToList());
        var interval = rows.GroupBy(r => r["expert"]).ToDictionary(g => g.Key, g => g.Select(r =>
        {
            double l = Num(r, "p10")!.Value, u = Num(r, "p90")!.Value;
            return ((u - l) + (10 * Math.Max(0, l - y2020)) + (10 * Math.Max(0, y2020 - u))) / ScaleOf(r);
        }).ToList());
        var pointWeights = ShrunkWeights(absolute);
        var rangeWeights = ShrunkWeights(interval);
        Assert.True(pointWeights["A"] > pointWeights["B"] && rangeWeights["B"] > rangeWeights["A"], "The two measures rank A and B differently.");

        // A live panel, weighted by track record, with a Point and a Range question on the same indicator.
        var indicatorId = (int)(await staff.GetOk("/api/indicators")).AsArray().Single(i => (string)i!["key"]! == "rent-r")!["id"]!;
        var roster = (await staff.GetOk("/api/experts")).AsArray().ToDictionary(e => (string)e!["externalKey"]!, e => (int)e!["id"]!);
        var next = (DateTime.UtcNow.Year + 1).ToString(Inv);
        var (panelId, questions, tokens, memberships) = await LivePanelAsync(
            staff, DateTime.UtcNow.ToString("yyyy-MM-dd", Inv), next, [(indicatorId, "Point"), (indicatorId, "Range")], roster, "TrackRecord");
        var points = new Dictionary<string, double> { ["A"] = 30, ["B"] = 27, ["C"] = 28.2, ["D"] = 29.1, ["E"] = 26.4 };
        var ranges = new Dictionary<string, (double L, double M, double H)>
        {
            ["A"] = (29.5, 30, 30.4), ["B"] = (24, 26, 29), ["C"] = (26, 27.5, 29), ["D"] = (27, 28.4, 30), ["E"] = (25, 27, 31),
        };
        foreach (var key in FiveExperts)
        {
            var (l, m, h) = ranges[key];
            await SubmitAsync(app, tokens[key], panelId, next, (questions[0], points[key], null, null, null), (questions[1], null, l, m, h));
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        var published = (await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK)).AsArray()
            .ToDictionary(c => (int)c!["questionId"]!, c => c!);

        // Point question: the weighted median with the absolute-error weights. Range question: quantile averaging with the
        // interval-score weights (5 answers: no trim, so the weighted mean of the P50s, P10s and P90s).
        var expectedPoint = WeightedMedian([.. FiveExperts.Select(k => points[k])], [.. FiveExperts.Select(k => pointWeights[k])]);
        Assert.Equal(expectedPoint, (double)published[questions[0]]["value"]!, 9);
        Assert.Equal(FiveExperts.Sum(k => rangeWeights[k] * ranges[k].M), (double)published[questions[1]]["value"]!, 9);
        Assert.Equal(FiveExperts.Sum(k => rangeWeights[k] * ranges[k].L), (double)published[questions[1]]["low"]!, 9);
        Assert.Equal(FiveExperts.Sum(k => rangeWeights[k] * ranges[k].H), (double)published[questions[1]]["high"]!, 9);

        // The comparison shows both sets, and computes its track-record column with them.
        var compare = await staff.GetOk($"/api/panels/{panelId}/consensus/compare");
        var codeOf = memberships.ToDictionary(kv => kv.Value, kv => kv.Key);
        foreach (var (set, expected, measure) in new[] { ("point", pointWeights, "ScaledAbsoluteError"), ("range", rangeWeights, "ScaledIntervalScore") })
        {
            var weights = compare["weights"]![set]!;
            Assert.Equal(measure, (string)weights["measure"]!);
            Assert.Equal(10, (int)weights["recordN"]!);
            foreach (var m in weights["members"]!.AsArray())
            {
                Assert.Equal(expected[codeOf[(int)m!["membershipId"]!]], (double)m["weight"]!, 9);
                Assert.Equal(2, (int)m["scoredForecasts"]!);
            }
        }
        foreach (var t in compare["targets"]!.AsArray())
        {
            Assert.Equal((double)published[(int)t!["questionId"]!]["value"]!, (double)t["trackRecord"]!["value"]!, 9);
        }
    }

    // ---------- The backtest through the API ----------

    /// <summary>
    /// Two past panels: bt-a (closed 2018-04-15) asks about idx-a 2018 and idx-b 2019; bt-b (closed 2020-04-15) about idx-a 2020
    /// and 2021. idx-a values are known on 15 February of the next year; idx-b 2019 is not in the file.
    /// </summary>
    private static (string Forecasts, string Observations) BacktestHistory()
    {
        var a = SeriesA();
        var b = SeriesB();
        var offsetsA2018 = new Dictionary<string, double> { ["A"] = 0.5, ["B"] = -0.8, ["C"] = 30, ["D"] = -28, ["E"] = 25 };
        var offsetsB2019 = new Dictionary<string, double> { ["A"] = 40, ["B"] = -35, ["C"] = 1, ["D"] = -1.5, ["E"] = 0.5 };
        var offsetsLater = new Dictionary<string, double> { ["A"] = 2, ["B"] = -3, ["C"] = 15, ["D"] = -12, ["E"] = 10 };
        var f = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value\n");
        foreach (var e in FiveExperts)
        {
            f.Append(Inv, $"bt-a,2018-03-01,2018-04-15,idx-a,points,2018,{e},1,{a[2018] + offsetsA2018[e]}\n");
            f.Append(Inv, $"bt-a,2018-03-01,2018-04-15,idx-b,points,2019,{e},1,{b[2019] + offsetsB2019[e]}\n");
            foreach (var year in new[] { 2020, 2021 })
            {
                f.Append(Inv, $"bt-b,2020-03-01,2020-04-15,idx-a,points,{year},{e},1,{a[year] + offsetsLater[e] + (year - 2020)}\n");
            }
        }
        var o = new StringBuilder("indicator,period,value,observed_on\n");
        foreach (var (y, v) in a)
        {
            o.Append(Inv, $"idx-a,{y},{v},{y + 1}-02-15\n");
        }
        foreach (var (y, v) in b.Where(kv => kv.Key < 2018))
        {
            o.Append(Inv, $"idx-b,{y},{v},{y + 1}-02-15\n");
        }
        return (f.ToString(), o.ToString());
    }

    /// <summary>bt-b's backtest recomputed from the files: weights from bt-a's items known before 2020-04-15, equal median against weighted median.</summary>
    private static (int History, double Equal, double Weighted) RecomputeBtB(string forecasts, bool withIdxB2019)
    {
        var a = SeriesA();
        var b = SeriesB();
        var rows = ReadCsv(forecasts);
        var errors = FiveExperts.ToDictionary(e => e, _ => new List<double>());
        foreach (var r in rows.Where(r => r["panel"] == "bt-a"))
        {
            var isB = r["indicator"] == "idx-b";
            if (isB && !withIdxB2019)
            {
                continue;
            }
            var truth = isB ? b[2019] : a[2018];
            var scale = NaiveScale(isB ? b : a, 2018);
            errors[r["expert"]].Add(Math.Abs(Num(r, "value")!.Value - truth) / scale);
        }
        var weights = ShrunkWeights(errors);
        var scaleB = NaiveScale(a, 2020);
        double sumEqual = 0, sumWeighted = 0;
        foreach (var year in new[] { 2020, 2021 })
        {
            var answers = rows.Where(r => r["panel"] == "bt-b" && r["target_period"] == year.ToString(Inv)).ToList();
            var values = answers.Select(r => Num(r, "value")!.Value).ToList();
            sumEqual += Math.Abs(Median(values) - a[year]) / scaleB;
            sumWeighted += Math.Abs(WeightedMedian(values, [.. answers.Select(r => weights[r["expert"]])]) - a[year]) / scaleB;
        }
        return (errors.Values.Sum(x => x.Count), sumEqual / 2, sumWeighted / 2);
    }

    [SkippableFact]
    public async Task Backtest_ThroughTheApi_EqualsARecomputation_IgnoresOutcomesKnownLater_AndSeesBackdatedOnes()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var (forecasts, observations) = BacktestHistory();
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
        Assert.True(status == HttpStatusCode.OK, text);

        async Task<(JsonNode A, JsonNode B, JsonNode Pooled)> BacktestAsync()
        {
            var body = await reviewer.GetOk("/api/scorecard/backtest");
            var panels = body["panels"]!.AsArray().ToDictionary(p => (string)p!["panel"]!, p => p!);
            Assert.Equal(2, panels.Count);
            return (panels["bt-a"], panels["bt-b"], body["pooled"]!);
        }
        static string Line(JsonNode n) => n.ToJsonString();

        var (a0, b0, pooled0) = await BacktestAsync();
        // bt-a closed with no history: flagged, no weighted figures, not pooled.
        Assert.False((bool)a0["hasHistory"]!);
        Assert.Equal(0, (int)a0["historyItems"]!);
        Assert.Null(a0["weightedScaledMae"]);
        Assert.Null(a0["difference"]);
        Assert.Equal(1, (int)a0["n"]!);

        var expected = RecomputeBtB(forecasts, withIdxB2019: false);
        Assert.True((bool)b0["hasHistory"]!);
        Assert.Equal(expected.History, (int)b0["historyItems"]!);
        Assert.Equal(2, (int)b0["n"]!);
        Assert.Equal(expected.Equal, (double)b0["equalScaledMae"]!, 9);
        Assert.Equal(expected.Weighted, (double)b0["weightedScaledMae"]!, 9);
        Assert.NotEqual(expected.Equal, expected.Weighted, 6);
        Assert.Equal(2, (int)pooled0["n"]!);
        Assert.Equal(1, (int)pooled0["panels"]!);
        Assert.Equal(expected.Equal, (double)pooled0["equalScaledMae"]!, 9);
        Assert.Equal(expected.Weighted, (double)pooled0["weightedScaledMae"]!, 9);

        // idx-b 2019 arrives, known only after both panels closed: it scores bt-a, and changes nothing for bt-b or the pool.
        var b2019 = SeriesB()[2019];
        await reviewer.PostOk("/api/outcomes", new { indicator = "idx-b", period = "2019", value = b2019, source = "late bulletin", observedOn = "2020-06-30" }, HttpStatusCode.OK);
        // idx-a 2018 is corrected later (same value, new source, a later date): it stays known from its first day.
        await reviewer.PostOk("/api/outcomes", new { indicator = "idx-a", period = "2018", value = SeriesA()[2018], source = "re-issued", observedOn = "2021-01-10" }, HttpStatusCode.OK);
        var (a1, b1, pooled1) = await BacktestAsync();
        Assert.Equal(2, (int)a1["n"]!);
        Assert.Equal(Line(b0), Line(b1));
        Assert.Equal(Line(pooled0), Line(pooled1));

        // Backdated: idx-b 2019 was in fact known on 2020-01-20, before bt-b closed. Now it informs bt-b's weights.
        await reviewer.PostOk("/api/outcomes", new { indicator = "idx-b", period = "2019", value = b2019, source = "earlier bulletin", observedOn = "2020-01-20" }, HttpStatusCode.OK);
        var (_, b2, pooled2) = await BacktestAsync();
        var leaked = RecomputeBtB(forecasts, withIdxB2019: true);
        Assert.Equal(leaked.History, (int)b2["historyItems"]!);
        Assert.Equal(10, leaked.History);
        Assert.Equal(leaked.Weighted, (double)b2["weightedScaledMae"]!, 9);
        Assert.NotEqual((double)b0["weightedScaledMae"]!, (double)b2["weightedScaledMae"]!, 6);
        Assert.Equal(leaked.Weighted, (double)pooled2["weightedScaledMae"]!, 9);
    }

    [SkippableFact]
    public async Task Import_WithoutObservedOn_OutcomesCountAsKnownAPublicationLagAfterTheirPeriod()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var a = SeriesA();
        var offsets = new Dictionary<string, double> { ["A"] = 0.5, ["B"] = -0.8, ["C"] = 30, ["D"] = -28, ["E"] = 25 };
        var f = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value\n");
        foreach (var e in FiveExperts)
        {
            f.Append(Inv, $"lag-a,2018-03-01,2018-04-15,idx-a,points,2018,{e},1,{a[2018] + offsets[e]}\n");
            // 2018 + 90 days = 2019-03-31: before lag-b closed, after lag-c closed.
            f.Append(Inv, $"lag-b,2019-03-01,2019-04-15,idx-a,points,2020,{e},1,{a[2020] + offsets[e] / 2}\n");
            f.Append(Inv, $"lag-c,2019-03-01,2019-03-20,idx-a,points,2020,{e},1,{a[2020] - offsets[e] / 3}\n");
        }
        var o = new StringBuilder("indicator,period,value\n");
        foreach (var (y, v) in a)
        {
            o.Append(Inv, $"idx-a,{y},{v}\n");
        }
        var (status, _, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", f.ToString()), ("observations", o.ToString()));
        Assert.True(status == HttpStatusCode.OK, text);

        var known = await app.WithDbAsync(db => db.Observations.Where(x => x.Period == "2018").Select(x => x.ObservedOn).SingleAsync());
        Assert.Equal(new DateOnly(2019, 3, 31), known);

        var body = await reviewer.GetOk("/api/scorecard/backtest");
        var panels = body["panels"]!.AsArray().ToDictionary(p => (string)p!["panel"]!, p => p!);
        Assert.True((bool)panels["lag-b"]["hasHistory"]!);
        Assert.Equal(5, (int)panels["lag-b"]["historyItems"]!);
        Assert.NotNull(panels["lag-b"]["weightedScaledMae"]);
        foreach (var none in new[] { "lag-a", "lag-c" })
        {
            Assert.False((bool)panels[none]["hasHistory"]!);
            Assert.Null(panels[none]["weightedScaledMae"]);
            Assert.NotNull(panels[none]["equalScaledMae"]);
        }
        var pooled = body["pooled"]!;
        Assert.Equal(1, (int)pooled["n"]!);
        Assert.Equal((double)panels["lag-b"]["equalScaledMae"]!, (double)pooled["equalScaledMae"]!, 12);
        Assert.Equal((double)panels["lag-b"]["weightedScaledMae"]!, (double)pooled["weightedScaledMae"]!, 12);
        Assert.Contains("no history", await reviewer.GetStringAsync("/Staff/Scorecard/Backtest"), StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task ConcurrentImportsOfTheSamePanels_OneWins_TheOtherIsRefused_NeverAServerError()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var (forecasts, observations) = TrackRecordHistory();
        for (var attempt = 0; attempt < 3; attempt++)
        {
            var keyed = forecasts.Replace("tr-", $"tr{attempt}-", StringComparison.Ordinal);
            var results = await Task.WhenAll(Enumerable.Range(0, 2).Select(_ => staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", keyed), ("observations", observations))));
            Assert.All(results, r => Assert.True(r.Status is HttpStatusCode.OK or HttpStatusCode.BadRequest or HttpStatusCode.Conflict, $"{(int)r.Status} {r.Text}"));
            Assert.Single(results, r => r.Status == HttpStatusCode.OK);
            var refused = results.Single(r => r.Status != HttpStatusCode.OK);
            Assert.NotNull(refused.Body!["title"]);
        }
        Assert.Equal(6, await app.WithDbAsync(db => db.Panels.CountAsync()));
        Assert.Equal(6 * 10, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

}

[Collection(SqliteCollection.Name)]
public sealed class SqliteScoringTests(SqliteFixture fixture, ITestOutputHelper output) : ScoringTests(fixture, output);

[Collection(PostgresCollection.Name)]
public sealed class PostgresScoringTests(PostgresFixture fixture, ITestOutputHelper output) : ScoringTests(fixture, output);
