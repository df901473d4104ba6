using System.Globalization;
using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;
using PdfDocumentReader = UglyToad.PdfPig.PdfDocument;

namespace PanelRound.Web.Tests.Calibration;

/// <summary>
/// Calibration questions in what staff take away: the dossier leaves them out of its consensus
/// sections and reports them in a section of their own; the consensus files (CSV, XLSX, JSON, with
/// and without the extra rows) and the long-horizon scorecard leave them out; the scorecard page
/// shows each expert's early record beside the long-horizon figures. The scores are recomputed
/// with the core's classical model (R. M. Cooke, "Experts in Uncertainty", Oxford University
/// Press, 1991, chapter 12) on the answers the tests submit.
/// </summary>
public abstract partial class CalibrationReportTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>The calibration panel, answered, its round closed, truths recorded (100) and concluded with calibration-question weights; the calibration indicator has a quarterly history, so it has benchmarks.</summary>
    private static async Task<CalibrationPanel> ConcludedAsync(TestApp app)
    {
        var p = await CalibrationPanel.CreateAsync(app, weighting: "Calibration");
        var volume = await app.WithDbAsync(db => db.Indicators.Where(i => i.Key == "cal-volume").Select(i => i.Id).SingleAsync());
        await p.Staff.PostOk($"/api/indicators/{volume}/observations",
            new[] { "2024Q3", "2024Q4", "2025Q1", "2025Q2", "2025Q3", "2025Q4", "2026Q1", "2026Q2" }
                .Select((period, i) => new { period, value = 90 + (1.5 * i), source = "registry" }).ToArray(), HttpStatusCode.OK);
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.RecordTruthsAsync(100);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);
        return p;
    }

    /// <summary>The core's classical model on the answers <see cref="CalibrationPanel"/> submits, with the truths at 100.</summary>
    private static ClassicalModelResult Recompute(CalibrationPanel p)
    {
        var items = p.CalibrationQuestions.Select(q => new CalibrationItem($"q{q}", 100)).ToList();
        var assessments = p.CalibrationQuestions.SelectMany(q => Enumerable.Range(0, p.Members.Count).Select(i =>
        {
            var (l, m, h) = CalibrationPanel.CalibrationAnswer(i);
            return new CalibrationAssessment(p.Members[i].Code, $"q{q}", new RangeAnswer(l, m, h));
        })).ToList();
        return ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);
    }

    /// <summary>A score as the reports write it: three decimals, or scientific notation below 0.001.</summary>
    private static string Score(double v) => v.ToString(v != 0 && Math.Abs(v) < 0.001 ? "0.00E+0" : "0.000", CultureInfo.InvariantCulture);

    [SkippableFact]
    public async Task Dossier_WithCalibrationQuestions_LeavesThemOutOfTheConsensusAndReportsThemApart()
    {
        var p = await ConcludedAsync(await StartAsync());
        var expected = Recompute(p);

        using var pdf = PdfDocumentReader.Open(await p.Staff.GetByteArrayAsync($"/api/panels/{p.PanelId}/report.pdf"));
        var pages = pdf.GetPages().Select(page => string.Join(' ', page.GetWords().Select(w => w.Text))).ToList();
        var section = pages.FindIndex(t => t.Contains("Calibration questions These questions", StringComparison.Ordinal));
        Assert.True(section > 0, "The dossier has no calibration section.");
        var appendix = pages.FindIndex(t => t.Contains("Method appendix", StringComparison.Ordinal));
        var before = string.Join('\n', pages.Take(section));
        var calibration = string.Join('\n', pages.Skip(section).Take(appendix - section));

        // The consensus sections: the two real questions, no calibration question; the cover counts them apart.
        Assert.Contains("Price per m²", before, StringComparison.Ordinal);
        Assert.Contains("Prime rent", before, StringComparison.Ordinal);
        Assert.DoesNotContain("Volume, segment", before, StringComparison.Ordinal);
        Assert.Contains("2 question(s), and 3 calibration question(s)", before, StringComparison.Ordinal);
        Assert.Equal(2, Regex.Count(before, "Published consensus"));

        // The calibration section: each question with its true value, each panel code's figures as the core computes them.
        Assert.Contains("Weighting applied", calibration, StringComparison.Ordinal);
        for (var i = 1; i <= 3; i++)
        {
            Assert.Matches($@"Volume, segment {i} {CalibrationPanel.CalibrationPeriod} EUR m 100\.0 \d{{4}}-\d{{2}}-\d{{2}} 4", calibration);
        }
        foreach (var e in expected.Experts)
        {
            var hits = string.Join(" · ", e.Score.Hits);
            Assert.Contains($"{e.Score.Key} {e.Score.N} {hits} {Score(e.Score.Calibration)} {Score(e.Score.Information)} {Score(e.Weight)}", calibration, StringComparison.Ordinal);
        }
        Assert.Contains($"Weighted combination {expected.Weighted!.N} {string.Join(" · ", expected.Weighted.Hits)} {Score(expected.Weighted.Calibration)}", calibration, StringComparison.Ordinal);
        Assert.Contains("fewer than about 8-10 questions carry little evidence; here N is at most 3", calibration, StringComparison.Ordinal);
        Assert.Contains($"cut-off optimised (α = {Score(expected.Cutoff)})", calibration, StringComparison.Ordinal);
        // Panel codes only: no expert's name anywhere.
        Assert.DoesNotContain("Harbour expert", string.Join('\n', pages), StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Dossier_CalibrationQuestionsWithoutTruths_SaysSoAndThatWeightingWasNotApplied()
    {
        var p = await CalibrationPanel.CreateAsync(await StartAsync());
        await p.AnswerAllAsync();
        await p.CloseRoundAsync();
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);

        using var pdf = PdfDocumentReader.Open(await p.Staff.GetByteArrayAsync($"/api/panels/{p.PanelId}/report.pdf"));
        var text = string.Join('\n', pdf.GetPages().Select(page => string.Join(' ', page.GetWords().Select(w => w.Text))));
        Assert.Contains("Weighting not applied: the consensus uses equal weights", text, StringComparison.Ordinal);
        Assert.Contains($"Volume, segment 1 {CalibrationPanel.CalibrationPeriod} EUR m not yet known – 4", text, StringComparison.Ordinal);
        Assert.Contains("No true value has been recorded yet.", text, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task ConsensusFiles_WithCalibrationQuestions_LeaveThemOutWithAndWithoutExtraRows()
    {
        var p = await ConcludedAsync(await StartAsync());
        var calibrationIds = p.CalibrationQuestions.Select(q => q.ToString(CultureInfo.InvariantCulture)).ToHashSet();
        var real = new[] { p.PointQuestion, p.RangeQuestion }.Select(q => q.ToString(CultureInfo.InvariantCulture)).ToHashSet();
        // The calibration questions do have benchmarks (their indicator has a history), so the extended files could carry them.
        var benchmarks = await p.Staff.GetOk($"/api/panels/{p.PanelId}/benchmarks");
        Assert.Contains(benchmarks["questions"]!.AsArray(), q => p.CalibrationQuestions.Contains((int)q!["questionId"]!)
            && q["benchmarks"]!.AsArray().Any(b => (bool)b!["available"]!));

        var json = await p.Staff.GetAs<List<ConsensusDto>>($"/api/panels/{p.PanelId}/consensus");
        Assert.Equal(4, json.Count);
        Assert.All(json, c => Assert.Contains(c.QuestionId.ToString(CultureInfo.InvariantCulture), real));

        foreach (var url in new[] { "consensus.csv", "consensus.csv?include=benchmarks,derived" })
        {
            var rows = ReadCsv(await p.Staff.GetByteArrayAsync($"/api/panels/{p.PanelId}/{url}"));
            Assert.NotEmpty(rows);
            Assert.All(rows, r => Assert.DoesNotContain(r["question_id"], calibrationIds));
            Assert.All(rows, r => Assert.NotEqual("cal-volume", r["indicator"]));
            Assert.All(rows, r => Assert.NotEqual(CalibrationPanel.CalibrationPeriod, r["period"]));
        }
        foreach (var url in new[] { "consensus.xlsx", "consensus.xlsx?include=benchmarks,derived" })
        {
            using var doc = SpreadsheetDocument.Open(new MemoryStream(await p.Staff.GetByteArrayAsync($"/api/panels/{p.PanelId}/{url}")), false);
            var sheets = doc.WorkbookPart!.Workbook.Sheets!.Elements<Sheet>().ToList();
            Assert.DoesNotContain(sheets, s => s.Name!.Value!.Contains("Volume", StringComparison.Ordinal));
            var tidy = (WorksheetPart)doc.WorkbookPart.GetPartById(sheets.Single(s => s.Name == "consensus").Id!);
            var cells = tidy.Worksheet.Descendants<Row>().Skip(1)
                .Select(r => r.Elements<Cell>().Select(c => c.InlineString?.InnerText ?? c.CellValue?.Text ?? "").ToList()).ToList();
            Assert.NotEmpty(cells);
            Assert.All(cells, r => Assert.DoesNotContain(r[2], calibrationIds));
            Assert.All(cells, r => Assert.NotEqual("cal-volume", r[4]));
        }
    }

    [SkippableFact]
    public async Task LongHorizonScorecard_WithCalibrationQuestionsAndTheirFigures_LeavesThemOut()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var r = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", History.Forecasts), ("observations", History.Observations));
        Assert.True((int)r.Status is >= 200 and < 300, r.Text);
        var reviewer = await StaffPages.SignedInClientAsync(app, "Reviewer");

        // The calibration indicators have observations at the asked periods: outcomes the long-horizon record could score, and must not.
        var card = await reviewer.GetAs<ScorecardApi.ScorecardDto>("/api/scorecard");
        Assert.Equal(3, card.Experts.Count);
        // Each expert answered the Point question about 2025 in both panels: two long-horizon forecasts, nothing more.
        Assert.All(card.Experts, e => Assert.Equal(2, e.N));
        Assert.Equal(0, card.Experts.Sum(e => e.NRange));
        var page = await reviewer.GetStringAsync("/Staff/Scorecard");
        var early = page.IndexOf("id=\"early-records\"", StringComparison.Ordinal);
        var filters = early < 0 ? page : page[..early];
        foreach (var key in History.CalibrationIndicators)
        {
            Assert.DoesNotContain($"value=\"{key}\"", filters, StringComparison.Ordinal);
            Assert.Equal(HttpStatusCode.OK, (await reviewer.GetAsync($"/api/scorecard?indicator={key}")).StatusCode);
            Assert.Empty((await reviewer.GetAs<ScorecardApi.ScorecardDto>($"/api/scorecard?indicator={key}")).Experts);
        }
        Assert.DoesNotContain("Q3", filters, StringComparison.Ordinal);
        var csv = Encoding.UTF8.GetString(await reviewer.GetByteArrayAsync("/api/scorecard/experts.csv"));
        Assert.DoesNotContain("cal-", csv, StringComparison.Ordinal);
    }

    // The early record on the scorecard page equals the core's classical model run per panel, pooled: hits summed over the
    // panels and scored once (calibration over all N questions), information averaged over all N questions, and the weight
    // of the panel scored last (Cooke 1991, ch. 12).
    [SkippableFact]
    public async Task ScorecardPage_EarlyRecord_EqualsTheCoresFiguresPooledOverPanels_BesideTheLongHorizonRecord()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var reviewer = await StaffPages.SignedInClientAsync(app, "Reviewer");
        Assert.Contains("No calibration question with a true value yet.", await reviewer.GetStringAsync("/Staff/Scorecard"), StringComparison.Ordinal);

        var r = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", History.Forecasts), ("observations", History.Observations));
        Assert.True((int)r.Status is >= 200 and < 300, r.Text);
        var html = WebUtility.HtmlDecode(await reviewer.GetStringAsync("/Staff/Scorecard"));
        var section = html[html.IndexOf("id=\"early-records\"", StringComparison.Ordinal)..];
        var card = await reviewer.GetAs<ScorecardApi.ScorecardDto>("/api/scorecard");

        var perPanel = History.Panels.ToDictionary(x => x, x => ClassicalModel.Evaluate(History.Items(x), History.Assessments(x), CalibrationSettings.Default));
        var latestKey = History.Panels[^1];
        var latestPanel = await app.WithDbAsync(db => db.Panels.Where(x => x.ExternalKey == latestKey).Select(x => x.Id).SingleAsync());
        foreach (var expert in History.Experts)
        {
            var scores = History.Panels.Select(x => perPanel[x].Experts.Single(e => e.Score.Key == expert)).ToList();
            var n = scores.Sum(s => s.Score.N);
            int[] hits = [.. Enumerable.Range(0, 4).Select(j => scores.Sum(s => s.Score.Hits[j]))];
            var calibration = ClassicalModel.CalibrationOf(hits).Calibration;
            var information = scores.Sum(s => s.Score.N * s.Score.Information) / n;
            var weight = scores[^1].Weight;

            var id = await app.WithDbAsync(db => db.Experts.Where(e => e.ExternalKey == expert).Select(e => e.Id).SingleAsync());
            var row = RowOf(section, id);
            Assert.Contains($"<td class=\"text-end early-n\">{n}</td>", row, StringComparison.Ordinal);
            Assert.Contains($"<td>{string.Join(" · ", hits)}</td>", row, StringComparison.Ordinal);
            Assert.Contains($"<td class=\"text-end early-calibration\">{Score(calibration)}</td>", row, StringComparison.Ordinal);
            Assert.Contains($"<td class=\"text-end early-information\">{Score(information)}</td>", row, StringComparison.Ordinal);
            Assert.Contains($"<span class=\"early-weight\">{Score(weight)}</span>", row, StringComparison.Ordinal);
            Assert.Contains($"href=\"/Staff/Panels/Calibration/{latestPanel}\"", row, StringComparison.Ordinal);
            Assert.Contains("round closed 2024-12-01", row, StringComparison.Ordinal);
            // Beside it, the long-horizon record of the same expert, as the scorecard API has it.
            var longHorizon = card.Experts.Single(e => e.Expert == expert);
            Assert.Contains($"{longHorizon.N} scored, scaled MAE", row, StringComparison.Ordinal);
        }
        // The test's own precondition: for some expert the pooled calibration is neither panel's alone, so a page that
        // showed one panel's figure would not pass.
        Assert.Contains(History.Experts, expert => History.Panels.All(x =>
        {
            var own = perPanel[x].Experts.Single(e => e.Score.Key == expert).Score.Calibration;
            var pooled = ClassicalModel.CalibrationOf([.. Enumerable.Range(0, 4).Select(j => History.Panels.Sum(y => perPanel[y].Experts.Single(e => e.Score.Key == expert).Score.Hits[j]))]).Calibration;
            return Score(own) != Score(pooled);
        }));
    }

    /// <summary>The table row of an expert in the early-record section.</summary>
    private static string RowOf(string section, int expertId)
    {
        var start = section.IndexOf($"<tr data-expert=\"{expertId}\">", StringComparison.Ordinal);
        Assert.True(start >= 0, $"No early-record row for expert {expertId}.");
        return section[start..section.IndexOf("</tr>", start, StringComparison.Ordinal)];
    }

    /// <summary>
    /// Two invented past panels with the same three experts: a Point question about 2025 (whose outcome exists) and
    /// calibration questions on quarterly indicators whose observations at the asked quarter are the truths.
    /// </summary>
    private static class History
    {
        public static readonly string[] Panels = ["hist-1", "hist-2"];

        public static readonly string[] Experts = ["ex-a", "ex-b", "ex-c"];

        public static readonly string[] CalibrationIndicators = ["cal-q1", "cal-q2", "cal-q3", "cal-q4"];

        private static readonly Dictionary<string, (string Start, string Closed, string Period, int Questions)> Setup = new()
        {
            ["hist-1"] = ("2023-11-01", "2023-12-01", "2023Q3", 3),
            ["hist-2"] = ("2024-11-01", "2024-12-01", "2024Q3", 4),
        };

        /// <summary>The truth of calibration indicator k at a panel's quarter.</summary>
        private static double Truth(string panel, int k) => 100 + (panel == "hist-1" ? 0 : 5) + (3 * k);

        /// <summary>Expert e's P10 / P50 / P90 for calibration indicator k: ex-a is centred and wide, ex-b narrow and biased, ex-c wide and shifted.</summary>
        private static (double P10, double P50, double P90) Answer(string panel, int e, int k)
        {
            var t = Truth(panel, k);
            return e switch
            {
                0 => (t - 6 + k, t - 1 + k, t + 7 + k),
                1 => (t + 2, t + 3, t + 4),
                _ => (t - 10 - (2 * k), t - 4, t + 1 + k),
            };
        }

        public static List<CalibrationItem> Items(string panel) =>
            [.. Enumerable.Range(0, Setup[panel].Questions).Select(k => new CalibrationItem(CalibrationIndicators[k], Truth(panel, k)))];

        public static List<CalibrationAssessment> Assessments(string panel) =>
            [.. Enumerable.Range(0, Setup[panel].Questions).SelectMany(k => Enumerable.Range(0, 3).Select(e =>
            {
                var (l, m, h) = Answer(panel, e, k);
                return new CalibrationAssessment(Experts[e], CalibrationIndicators[k], new RangeAnswer(l, m, h));
            }))];

        public static string Forecasts
        {
            get
            {
                var b = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value,p10,p50,p90,calibration\n");
                foreach (var panel in Panels)
                {
                    var (start, closed, period, questions) = Setup[panel];
                    for (var e = 0; e < 3; e++)
                    {
                        b.Append(CultureInfo.InvariantCulture, $"{panel},{start},{closed},price-h,EUR/m²,2025,{Experts[e]},1,{3000 + (150 * e) + (panel == "hist-1" ? 0 : 40)},,,,0\n");
                        for (var k = 0; k < questions; k++)
                        {
                            var (l, m, h) = Answer(panel, e, k);
                            b.Append(CultureInfo.InvariantCulture, $"{panel},{start},{closed},{CalibrationIndicators[k]},EUR m,{period},{Experts[e]},1,,{l},{m},{h},1\n");
                        }
                    }
                }
                return b.ToString();
            }
        }

        public static string Observations
        {
            get
            {
                var b = new StringBuilder("indicator,period,value,observed_on\n");
                foreach (var y in new[] { 2021, 2022, 2023, 2024, 2025 })
                {
                    b.Append(CultureInfo.InvariantCulture, $"price-h,{y},{2800 + (60 * (y - 2021))},{y + 1}-02-01\n");
                }
                foreach (var panel in Panels)
                {
                    var (_, closed, period, questions) = Setup[panel];
                    for (var k = 0; k < questions; k++)
                    {
                        b.Append(CultureInfo.InvariantCulture, $"{CalibrationIndicators[k]},{period},{Truth(panel, k)},{closed}\n");
                    }
                }
                return b.ToString();
            }
        }
    }


    /// <summary>The rows of a CSV export (RFC 4180 quoting), by column name.</summary>
    private static List<Dictionary<string, string>> ReadCsv(byte[] bytes)
    {
        var lines = Encoding.UTF8.GetString(bytes).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        var header = Fields(lines[0]);
        return [.. lines.Skip(1).Select(l => header.Zip(Fields(l)).ToDictionary(x => x.First, x => x.Second, StringComparer.Ordinal))];
    }

    private static List<string> Fields(string line)
    {
        var fields = new List<string>();
        var current = new StringBuilder();
        var quoted = false;
        for (var i = 0; i < line.Length; i++)
        {
            var c = line[i];
            if (quoted)
            {
                if (c == '"' && i + 1 < line.Length && line[i + 1] == '"')
                {
                    current.Append('"');
                    i++;
                }
                else if (c == '"')
                {
                    quoted = false;
                }
                else
                {
                    current.Append(c);
                }
            }
            else if (c == '"')
            {
                quoted = true;
            }
            else if (c == ',')
            {
                fields.Add(current.ToString());
                current.Clear();
            }
            else
            {
                current.Append(c);
            }
        }
        fields.Add(current.ToString());
        return fields;
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteCalibrationReportTests(SqliteFixture fixture) : CalibrationReportTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresCalibrationReportTests(PostgresFixture fixture) : CalibrationReportTests(fixture);
