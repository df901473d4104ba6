using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.VisualBasic.FileIO;
using PanelRound.Data.Entities;
using PanelRound.Web.Application;
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

    private static async Task<(HttpStatusCode Status, JsonNode? Body, string Text)> PostFiles(HttpClient client, string url, params (string Name, string Content)[] files)
    {
        using var form = new MultipartFormDataContent();
        foreach (var (name, content) in files)
        {
            var part = new ByteArrayContent(Encoding.UTF8.GetBytes(content));
            part.Headers.ContentType = new MediaTypeHeaderValue("text/csv");
            form.Add(part, name, name + ".csv");
        }
        var r = await client.PostAsync(url, form);
        var text = await r.Content.ReadAsStringAsync();
        return (r.StatusCode, text.Length == 0 ? null : JsonNode.Parse(text), text);
    }

    // ---------- The demo ----------

    [SkippableFact]
    public async Task Demo_Scorecard_EqualsRecomputationFromTheDemoFiles_AndTheTraitsShow()
    {
        var app = await StartAsync(new Dictionary<string, string?> { ["Demo:Enabled"] = "true", ["Demo:Folder"] = DemoFolder });
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var scorecard = await reviewer.GetOk("/api/scorecard");

        // Recompute from demo-data: final round of each concluded panel, against observations.csv.
        var structure = JsonNode.Parse(File.ReadAllText(Path.Combine(DemoFolder, "panels.json")))!;
        var concluded = structure["panels"]!.AsArray().Where(p => (bool)p!["concluded"]!).ToDictionary(
            p => (string)p!["key"]!,
            p => (Start: DateOnly.Parse((string)p!["startsOn"]!, Inv), Final: p["rounds"]!.AsArray().Max(r => (int)r!["number"]!)));
        var observations = ReadCsv(File.ReadAllText(Path.Combine(DemoFolder, "observations.csv")))
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
        var (status, body, text) = await PostFiles(facilitator, "/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
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
        }
        // The consensus is scored like an expert: one item per question-period (5 panels x 2 indicators x 2 periods).
        Assert.Equal(20, (int)scorecard["consensus"]!["n"]!);
        Assert.Equal(20, (int)scorecard["naive"]!["n"]!);

        // Importing the same panels again is refused, and changes nothing.
        var again = await PostFiles(facilitator, "/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
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

        var (status, body, text) = await PostFiles(facilitator, "/api/imports/past-panels", ("forecasts", string.Join('\n', lines)), ("observations", string.Join('\n', obsLines)));
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
        var (status, _, text) = await PostFiles(facilitator, "/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
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
        var (badStatus, badBody, badText) = await PostFiles(reviewer, "/api/outcomes/csv", ("file", "indicator,period,value\nprice-x,2025,5000\nnope,2025,1\n"));
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
        var (status, _, text) = await PostFiles(staff, "/api/imports/past-panels", ("forecasts", forecasts), ("observations", observations));
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
        var members = compare["weights"]!["members"]!.AsArray();
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
            return (await scope.ServiceProvider.GetRequiredService<IMemberWeights>().ForPanelAsync(panelId, asOf))!;
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
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteScoringTests(SqliteFixture fixture, ITestOutputHelper output) : ScoringTests(fixture, output);

[Collection(PostgresCollection.Name)]
public sealed class PostgresScoringTests(PostgresFixture fixture, ITestOutputHelper output) : ScoringTests(fixture, output);
