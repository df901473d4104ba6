using System.Globalization;
using System.Net;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.VisualBasic.FileIO;
using PanelRound.Web.Features.Imports;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Imports;

/// <summary>
/// A large import of past panels through the API lands exactly, every forecast as the file has it
/// (read back with an independent CSV reader, .NET's TextFieldParser, and compared with what the
/// database holds), and an error on the last line, found on the first reading or only once the
/// forecasts are in the database, leaves nothing stored. No published source: the columns are the
/// product's own (<see cref="PastPanelImport"/>).
/// </summary>
public abstract class PastPanelImportTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    private const int Panels = 20;

    /// <summary>
    /// 20 panels x 2 rounds x 25 experts x 4 questions (two Point, two Range) x 5 target years =
    /// 20,000 forecasts, the panels' rows interleaved through the file; experts drawn from a pool of 60.
    /// </summary>
    private static string GeneratedForecasts()
    {
        var random = new Random(20261203);
        var f = new StringBuilder("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value,p10,p50,p90\n");
        for (var round = 1; round <= 2; round++)
        {
            for (var slot = 0; slot < 25; slot++)
            {
                for (var panel = 0; panel < Panels; panel++)
                {
                    var year = 2010 + panel % 8;
                    var expert = $"EXP-{(panel * 7 + slot) % 60:000}";
                    foreach (var (indicator, unit, range) in new[] { ("big-price", "EUR/m²", false), ("big-rent", "EUR/m²/month", true), ("big-vacancy", "%", false), ("big-yield", "%", true) })
                    {
                        for (var target = year + 1; target <= year + 5; target++)
                        {
                            var mid = Math.Round(100 + 4000 * random.NextDouble(), 2);
                            var numbers = range
                                ? FormattableString.Invariant($",{Math.Round(mid - 10 * random.NextDouble(), 2)},{mid},{Math.Round(mid + 10 * random.NextDouble(), 2)}")
                                : FormattableString.Invariant($"{mid},,,");
                            f.Append(Inv, $"hist-{panel:00},{year}-02-01,{year}-03-15,{indicator},{unit},{target},{expert},{round},{numbers}\n");
                        }
                    }
                }
            }
        }
        return f.ToString();
    }

    private const string Observations = "indicator,period,value,source\nbig-price,2009,3150.5,registry\nbig-price,2010,3222,registry\nbig-rent,2010,14.25,\n";

    /// <summary>One forecast, as text: panel, indicator, target period, expert, round and the numbers in round-trip form.</summary>
    private static string Key(string panel, string indicator, string period, string expert, int round, double? value, double? p10, double? p50, double? p90) =>
        string.Join('|', panel, indicator, period, expert, round.ToString(Inv), R(value), R(p10), R(p50), R(p90));

    private static string R(double? v) => v?.ToString("R", Inv) ?? "";

    private static List<Dictionary<string, string>> ReadCsv(string text)
    {
        using var parser = new TextFieldParser(new StringReader(text)) { TextFieldType = FieldType.Delimited, HasFieldsEnclosedInQuotes = true, TrimWhiteSpace = false };
        parser.SetDelimiters(",");
        var headers = parser.ReadFields()!;
        var rows = new List<Dictionary<string, string>>();
        while (!parser.EndOfData)
        {
            var fields = parser.ReadFields()!;
            rows.Add(headers.Select((h, i) => (h, v: fields[i])).ToDictionary(x => x.h, x => x.v));
        }
        return rows;
    }

    private static double? Num(Dictionary<string, string> row, string column) => row[column].Length > 0 ? double.Parse(row[column], Inv) : null;


    private static Task<int[]> CountsAsync(TestApp app) => app.WithDbAsync(async db => new[]
    {
        await db.Panels.CountAsync(), await db.Questions.CountAsync(), await db.Rounds.CountAsync(), await db.Memberships.CountAsync(),
        await db.Experts.CountAsync(), await db.Indicators.CountAsync(), await db.Estimates.CountAsync(), await db.FrozenFeedback.CountAsync(),
        await db.Consensus.CountAsync(), await db.Observations.CountAsync(), await db.AuditEvents.CountAsync(a => a.Action.Contains("import")),
    });

    [SkippableFact]
    public async Task Import_20000Forecasts_EveryForecastStoredAsTheFileHasIt()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var forecasts = GeneratedForecasts();

        var (status, body, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", forecasts), ("observations", Observations));

        Assert.True(status == HttpStatusCode.OK, text);
        var rows = ReadCsv(forecasts);
        Assert.Equal(20_000, rows.Count);
        var experts = rows.Select(r => r["expert"]).Distinct().Count();
        Assert.Equal(Panels, (int)body!["panels"]!);
        Assert.Equal(rows.Select(r => (r["panel"], r["indicator"])).Distinct().Count(), (int)body["questions"]!);
        Assert.Equal(rows.Select(r => (r["panel"], r["round"])).Distinct().Count(), (int)body["rounds"]!);
        Assert.Equal(rows.Count, (int)body["estimates"]!);
        Assert.Equal(experts, (int)body["experts"]!);
        Assert.Equal(experts, (int)body["expertsCreated"]!);
        Assert.Equal(4, (int)body["indicatorsCreated"]!);
        Assert.Equal(3, (int)body["observationsAdded"]!);

        var expected = rows.Select(r => Key(r["panel"], r["indicator"], r["target_period"], r["expert"], int.Parse(r["round"], Inv),
            Num(r, "value"), Num(r, "p10"), Num(r, "p50"), Num(r, "p90"))).Order(StringComparer.Ordinal).ToList();
        var stored = await app.WithDbAsync(db => (
            from e in db.Estimates
            join m in db.Memberships on e.MembershipId equals m.Id
            join x in db.Experts on m.ExpertId equals x.Id
            join q in db.Questions on e.QuestionId equals q.Id
            join i in db.Indicators on q.IndicatorId equals i.Id
            join r in db.Rounds on e.RoundId equals r.Id
            join p in db.Panels on r.PanelId equals p.Id
            select new { Panel = p.ExternalKey!, Indicator = i.Key, e.Period, Expert = x.ExternalKey!, r.Number, e.Value, e.P10, e.P50, e.P90, e.IsDraft, e.Rationale, e.CreatedAt, r.ClosedAt, SamePanel = m.PanelId == p.Id && q.PanelId == p.Id })
            .ToListAsync());
        Assert.Equal(expected, stored.Select(s => Key(s.Panel, s.Indicator, s.Period, s.Expert, s.Number, s.Value, s.P10, s.P50, s.P90)).Order(StringComparer.Ordinal));
        Assert.All(stored, s => Assert.True(s.SamePanel && !s.IsDraft && s.Rationale is null && s.CreatedAt == s.ClosedAt));

        // A checksum of every number, exact in decimal arithmetic, against the file's own digits.
        var fileSum = rows.Sum(r => new[] { "value", "p10", "p50", "p90" }.Sum(c => r[c].Length > 0 ? decimal.Parse(r[c], Inv) : 0m));
        var storedSum = stored.Sum(s => (decimal)(s.Value ?? 0) + (decimal)(s.P10 ?? 0) + (decimal)(s.P50 ?? 0) + (decimal)(s.P90 ?? 0));
        Assert.Equal(fileSum, storedSum);

        // Every forecast counts once in its round's frozen feedback; one consensus per question-period.
        var (feedbackN, consensus) = await app.WithDbAsync(async db => (await db.FrozenFeedback.SumAsync(f => f.N), await db.Consensus.CountAsync()));
        Assert.Equal(rows.Count, feedbackN);
        Assert.Equal(rows.Select(r => (r["panel"], r["indicator"], r["target_period"])).Distinct().Count(), consensus);
    }

    public static TheoryData<string> LastLineErrors => new() { "unreadable number", "forecast given twice" };

    [SkippableTheory]
    [MemberData(nameof(LastLineErrors))]
    public async Task Import_ErrorOnTheLastLine_Is400NamingItsRow_AndStoresNothing(string @case)
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var lines = GeneratedForecasts().TrimEnd('\n').Split('\n').ToList();
        var first = lines[1].Split(',');
        string expected;
        if (@case == "unreadable number")
        {
            // The last of the 20,000 rows gets a value the number rule refuses (found on the first reading).
            var last = lines[^1].Split(',');
            last[8] = last[8].Length > 0 ? "12;5" : last[8];
            last[10] = last[10].Length > 0 ? "12;5" : last[10];
            lines[^1] = string.Join(',', last);
            expected = "Row 20000 (line 20001): ";
        }
        else
        {
            // Row 20,001 repeats row 1's forecast with another value (found once the forecasts are in the database).
            first[8] = "1";
            lines.Add(string.Join(',', first));
            expected = $"Row 20001 (line 20002): expert '{first[6]}' has another forecast of {first[3]} {first[5]} in round {first[7]} of panel '{first[0]}'.";
        }

        var (status, body, text) = await staff.PostCsvFiles("/api/imports/past-panels", ("forecasts", string.Join('\n', lines) + "\n"), ("observations", Observations));

        Assert.True(status == HttpStatusCode.BadRequest, text);
        var errors = body!["errors"]!.AsObject();
        var message = (string)Assert.Single(Assert.Single(errors, e => e.Key == $"forecasts row {lines.Count - 1}").Value!.AsArray())!;
        Assert.StartsWith(expected, message, StringComparison.Ordinal);
        Assert.Single(errors);
        Assert.All(await CountsAsync(app), c => Assert.Equal(0, c));
    }

    [SkippableFact]
    public async Task Import_StreamThatCannotSeek_IsReadFromACopy()
    {
        var app = await StartAsync();
        var forecasts = string.Join('\n', GeneratedForecasts().Split('\n').Take(201)) + "\n";

        using var scope = app.Services.CreateScope();
        await using var stream = new ForwardOnly(Encoding.UTF8.GetBytes(forecasts));
        var result = await scope.ServiceProvider.GetRequiredService<PastPanelImport>().ImportAsync(stream, null, "test");

        Assert.True(result.IsOk, string.Join("; ", result.Errors.SelectMany(e => e.Value)));
        Assert.Equal(200, result.Value!.Estimates);
        Assert.Equal(200, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    /// <summary>A stream read front to back only, as a request body is.</summary>
    private sealed class ForwardOnly(byte[] bytes) : MemoryStream(bytes)
    {
        public override bool CanSeek => false;

        public override long Position { get => base.Position; set => throw new NotSupportedException(); }

        public override long Seek(long offset, SeekOrigin loc) => throw new NotSupportedException();
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqlitePastPanelImportTests(SqliteFixture fixture) : PastPanelImportTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresPastPanelImportTests(PostgresFixture fixture) : PastPanelImportTests(fixture);
