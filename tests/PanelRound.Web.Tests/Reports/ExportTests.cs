using System.Globalization;
using System.Net;
using System.Text;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;
using PanelRound.Web.Tests.Infrastructure;
using PdfDocumentReader = UglyToad.PdfPig.PdfDocument;

namespace PanelRound.Web.Tests.Reports;

/// <summary>
/// The consensus reaches the model and the audit file: the CSV (parsed with CsvHelper), the XLSX
/// (read with the Open XML SDK) and the PDF dossier (read back with PdfPig) carry the same figures
/// as the JSON API, cell by cell; injected formulas come out inert; expert names appear nowhere.
/// </summary>
public abstract class ExportTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private const string Injection = "=HYPERLINK(\"http://evil.example\",\"click\")";

    private static readonly string[] Columns =
        ["panel_id", "panel", "question_id", "question", "indicator", "unit", "format", "period", "consensus", "low", "high", "band", "n", "method", "round", "published_at"];

    internal sealed record Concluded(HttpClient Staff, int PanelId, List<string> ExpertNames);

    internal static async Task<Concluded> ConcludedPanelAsync(TestApp app)
    {
        var staff = await app.StaffClientAsync();
        var indicator = (int)(await staff.PostOk("/api/indicators", new { key = "export-price", name = "Export price", unitLabel = "EUR/m²", decimals = 1 }))["id"]!;
        await staff.PostOk($"/api/indicators/{indicator}/observations",
            Enumerable.Range(2018, 8).Select(y => new { period = y.ToString(CultureInfo.InvariantCulture), value = 3000 + (90 * (y - 2018)), source = "test" }).ToArray(), HttpStatusCode.OK);
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "+Outlook " + Injection, brief = "b", startsOn = "2026-11-02", targetPeriods = "2027-2029" }))["id"]!;
        var point = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = Injection + " price", format = "Point" }))["id"]!;
        var range = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "-Rent band", format = "Range" }))["id"]!;
        var names = new List<string>();
        var tokens = new List<string>();
        for (var i = 0; i < 6; i++)
        {
            var name = $"{Injection} Expert{i}";
            names.Add(name);
            var e = await staff.PostOk("/api/experts", new { name, email = $"export{i}@panel.example" });
            tokens.Add((string)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = (int)e["id"]!, sendInvitation = false }))["token"]!);
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        var expert = app.Client();
        for (var i = 0; i < 6; i++)
        {
            var v = 3700 + (37.5 * i);
            await expert.WithExpertToken(tokens[i]).PostOk($"/api/expert/panels/{panelId}/estimates", new
            {
                draft = false,
                answers = new object[]
                {
                    new { questionId = point, rationale = i == 0 ? Injection : $"View {i}", periods = new[] { 2027, 2028, 2029 }.Select(y => new { period = y.ToString(CultureInfo.InvariantCulture), value = v + (y - 2027) * 55.25 }).ToArray() },
                    new { questionId = range, periods = new[] { 2027, 2028, 2029 }.Select(y => new { period = y.ToString(CultureInfo.InvariantCulture), p10 = 20 + i * 0.3, p50 = 22 + i * 0.35, p90 = 25 + i * 0.4 }).ToArray() },
                },
            }, HttpStatusCode.OK);
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK);
        return new Concluded(staff, panelId, names);
    }

    [SkippableFact]
    public async Task ConsensusExports_CsvXlsxPdf_EqualTheJsonCellByCell_AndInjectionIsInert()
    {
        var app = await StartAsync();
        var (staff, panelId, names) = await ConcludedPanelAsync(app);
        var json = (await staff.GetOk($"/api/panels/{panelId}/consensus")).AsArray();
        Assert.Equal(6, json.Count);

        // CSV, parsed with CsvHelper: the fixed columns in order, one row per question-period, equal to the JSON.
        var csvResponse = await staff.GetAsync($"/api/panels/{panelId}/consensus.csv");
        Assert.Equal(HttpStatusCode.OK, csvResponse.StatusCode);
        Assert.Equal("text/csv", csvResponse.Content.Headers.ContentType?.MediaType);
        var csvBytes = await csvResponse.Content.ReadAsByteArrayAsync();
        var csv = ReadCsv(csvBytes);
        Assert.Equal(Columns, csv.Headers);
        Assert.Equal(json.Count, csv.Rows.Count);
        foreach (var (row, entry) in csv.Rows.Zip(json))
        {
            Assert.Equal((int)entry!["questionId"]!, int.Parse(row["question_id"], CultureInfo.InvariantCulture));
            Assert.Equal((string)entry["period"]!, row["period"]);
            Assert.Equal((double)entry["value"]!, double.Parse(row["consensus"], CultureInfo.InvariantCulture));
            Assert.Equal((double)entry["low"]!, double.Parse(row["low"], CultureInfo.InvariantCulture));
            Assert.Equal((double)entry["high"]!, double.Parse(row["high"], CultureInfo.InvariantCulture));
            Assert.Equal((int)entry["n"]!, int.Parse(row["n"], CultureInfo.InvariantCulture));
            Assert.Equal((string)entry["band"]!, row["band"]);
            Assert.Equal((int)entry["round"]!, int.Parse(row["round"], CultureInfo.InvariantCulture));
            Assert.Equal((string)entry["question"]!, row["question"].TrimStart('\''));
            Assert.Equal(1, int.Parse(row["round"], CultureInfo.InvariantCulture));
            Assert.True(DateTime.TryParseExact(row["published_at"], "yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal, out _));
            // Neutralised: texts that would start a formula begin with an apostrophe.
            Assert.StartsWith("'+Outlook", row["panel"], StringComparison.Ordinal);
            Assert.DoesNotMatch("^[=+\\-@\t\r]", row["question"]);
        }
        Assert.Equal(["P10-P90", "Q1-Q3"], csv.Rows.Select(r => r["band"]).Distinct().Order());

        // XLSX, read with the Open XML SDK: the tidy sheet equals the CSV cell by cell, numbers as numeric cells.
        var xlsx = await staff.GetByteArrayAsync($"/api/panels/{panelId}/consensus.xlsx");
        using (var doc = SpreadsheetDocument.Open(new MemoryStream(xlsx), false))
        {
            var book = doc.WorkbookPart!;
            var sheets = book.Workbook.Sheets!.Elements<Sheet>().ToList();
            Assert.Equal("consensus", sheets[0].Name!.Value);
            Assert.Equal(2 + 2, sheets.Count); // tidy, one per question, method
            var rows = ((WorksheetPart)book.GetPartById(sheets[0].Id!)).Worksheet.Descendants<Row>().ToList();
            Assert.Equal(Columns, rows[0].Elements<Cell>().Select(CellText));
            Assert.Equal(csv.Rows.Count + 1, rows.Count);
            for (var r = 0; r < csv.Rows.Count; r++)
            {
                var cells = rows[r + 1].Elements<Cell>().ToList();
                Assert.Equal(Columns.Length, cells.Count);
                for (var c = 0; c < Columns.Length; c++)
                {
                    var expected = csv.Rows[r][Columns[c]];
                    if (cells[c].DataType?.Value == CellValues.Number)
                    {
                        Assert.Equal(double.Parse(expected, CultureInfo.InvariantCulture), double.Parse(cells[c].CellValue!.Text, CultureInfo.InvariantCulture));
                    }
                    else
                    {
                        // The workbook keeps the text as typed; a text that begins like a formula carries the
                        // quote-prefix style instead of the CSV's visible apostrophe.
                        var guarded = expected.StartsWith('\'') && expected.Length > 1 && "=+-@\t\r".Contains(expected[1], StringComparison.Ordinal);
                        Assert.Equal(guarded ? expected[1..] : expected, CellText(cells[c]));
                        var format = (CellFormat)book.WorkbookStylesPart!.Stylesheet.CellFormats!.ElementAt((int)cells[c].StyleIndex!.Value);
                        Assert.Equal(guarded, format.QuotePrefix?.Value == true);
                    }
                }
                foreach (var numeric in new[] { "consensus", "low", "high", "n", "question_id", "panel_id", "round" })
                {
                    Assert.Equal(CellValues.Number, cells[Array.IndexOf(Columns, numeric)].DataType!.Value);
                }
            }
            Assert.Contains(sheets.Skip(1).Take(2), s => ((WorksheetPart)book.GetPartById(s.Id!)).Worksheet.Descendants<Cell>()
                .Any(c => c.DataType?.Value == CellValues.Number));
        }

        // The dossier, read back with PdfPig: each question-period's consensus and band as the API has them.
        var pdfBytes = await staff.GetByteArrayAsync($"/api/panels/{panelId}/report.pdf");
        using var pdf = PdfDocumentReader.Open(pdfBytes);
        var words = pdf.GetPages().SelectMany(p => p.GetWords()).Select(w => w.Text).ToList();
        var text = string.Join(' ', words);
        foreach (var entry in json)
        {
            // The indicator has one decimal; the dossier writes numbers with it and thousands separators.
            string F(string field) => ((double)entry![field]!).ToString("N1", CultureInfo.InvariantCulture);
            var sequence = new[] { (string)entry!["period"]!, F("value"), F("low"), F("high"), (string)entry["band"]! };
            Assert.True(ContainsSequence(words, sequence), $"The dossier lacks the row {string.Join(' ', sequence)}.");
        }
        // The injected rationale is shown as text, never as a link; no expert's name appears anywhere.
        Assert.Contains("=HYPERLINK(\"http://evil.example\",\"click\")", text, StringComparison.Ordinal);
        Assert.All(pdf.GetPages(), p => Assert.Empty(p.GetAnnotations()));
        foreach (var name in names)
        {
            Assert.DoesNotContain(name, text, StringComparison.Ordinal);
            Assert.DoesNotContain(name, Encoding.UTF8.GetString(csvBytes), StringComparison.Ordinal);
        }
        Assert.Contains("not a valuation", text, StringComparison.Ordinal);
        Assert.Matches("Page 1 of \\d+", text);
    }

    [SkippableFact]
    public async Task ConsensusExports_BeforeConclusion_Conflict_AndUnknownPanel_NotFound()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Draft", brief = "b", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!;
        Assert.Equal(HttpStatusCode.Conflict, (await staff.GetAsync($"/api/panels/{panelId}/consensus.csv")).StatusCode);
        Assert.Equal(HttpStatusCode.Conflict, (await staff.GetAsync($"/api/panels/{panelId}/consensus.xlsx")).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await staff.GetAsync("/api/panels/999999/consensus.csv")).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await staff.GetAsync("/api/panels/999999/report.pdf")).StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await app.Client().GetAsync($"/api/panels/{panelId}/report.pdf")).StatusCode);
    }

    [SkippableFact]
    public async Task ScorecardFiles_CsvRowPerExpert_EqualsTheApi_AndPdfReadsBack()
    {
        var app = await StartDemoAsync();
        var reviewer = await app.StaffClientAsync(PanelRound.Data.Entities.Roles.Reviewer);
        var card = await reviewer.GetOk("/api/scorecard");
        var csv = ReadCsv(await reviewer.GetByteArrayAsync("/api/scorecard/experts.csv"));
        var experts = card["experts"]!.AsArray();
        Assert.Equal(experts.Count, csv.Rows.Count);
        foreach (var e in experts)
        {
            var row = csv.Rows.Single(r => r["expert"] == (string)e!["expert"]!);
            Assert.Equal((int)e!["n"]!, int.Parse(row["n"], CultureInfo.InvariantCulture));
            Assert.Equal((double?)e["mae"], Parse(row["mae"]));
            Assert.Equal((double?)e["scaledMae"], Parse(row["scaled_mae"]));
            Assert.Equal((int)e["nScaled"]!, int.Parse(row["n_scaled"], CultureInfo.InvariantCulture));
            Assert.Equal((double?)e["coverage"], Parse(row["coverage"]));
            Assert.Equal((int)e["nRange"]!, int.Parse(row["n_range"], CultureInfo.InvariantCulture));
            Assert.Equal((double?)e["weight"], Parse(row["weight"]));
        }
        var filtered = ReadCsv(await reviewer.GetByteArrayAsync("/api/scorecard/experts.csv?indicator=apt-price-old-harbour"));
        var filteredCard = await reviewer.GetOk("/api/scorecard?indicator=apt-price-old-harbour");
        Assert.Equal(filteredCard["experts"]!.AsArray().Sum(e => (int)e!["n"]!), filtered.Rows.Sum(r => int.Parse(r["n"], CultureInfo.InvariantCulture)));

        using var pdf = PdfDocumentReader.Open(await reviewer.GetByteArrayAsync("/api/scorecard/report.pdf"));
        var text = string.Join(' ', pdf.GetPages().SelectMany(p => p.GetWords()).Select(w => w.Text));
        foreach (var e in experts)
        {
            Assert.Contains((string)e!["expert"]!, text, StringComparison.Ordinal);
        }
        Assert.Contains("Backtest", text, StringComparison.Ordinal);
        Assert.Contains("not valuations or investment advice", text, StringComparison.Ordinal);
    }

    private static double? Parse(string s) => s.Length == 0 ? null : double.Parse(s, CultureInfo.InvariantCulture);

    private static string CellText(Cell c) => c.InlineString?.InnerText ?? c.CellValue?.Text ?? "";

    private static bool ContainsSequence(List<string> words, string[] sequence)
    {
        for (var i = 0; i + sequence.Length <= words.Count; i++)
        {
            if (sequence.Select((s, k) => words[i + k] == s).All(x => x))
            {
                return true;
            }
        }
        return false;
    }

    private static (List<string> Headers, List<Dictionary<string, string>> Rows) ReadCsv(byte[] bytes)
    {
        using var reader = CsvHelper.CsvReader.Create(new MemoryStream(bytes), null, leaveOpen: false);
        var headers = reader.Headers.ToList();
        var rows = new List<Dictionary<string, string>>();
        while (reader.Read())
        {
            rows.Add(headers.Select((h, i) => (h, v: reader.GetString(i))).ToDictionary(x => x.h, x => x.v));
        }
        return (headers, rows);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteExportTests(SqliteFixture fixture) : ExportTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresExportTests(PostgresFixture fixture) : ExportTests(fixture);
