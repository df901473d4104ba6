using System.Diagnostics;
using System.Globalization;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using Npgsql;
using NpgsqlTypes;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Load;

/// <summary>
/// The past-panel import: a forecasts file of N rows (100,000 by default) posted to
/// <c>POST /api/imports/past-panels</c> with a Facilitator API key, against a raw binary COPY of the
/// same rows into the same table on the same server, interleaved in pairs, on a throwaway PostgreSQL
/// with fsync on. Prints the times, the ratio of each pair and their median, and the app process's
/// peak resident memory (VmHWM from /proc) during each import and over its life.
/// </summary>
internal static class ImportThroughput
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    private static readonly (string Key, string Unit, bool Range)[] Indicators =
    [
        ("imp-price-old-harbour", "EUR/m²", false), ("imp-rent-old-harbour", "EUR/m²/month", true),
        ("imp-vacancy-calderport", "%", false), ("imp-yield-calderport", "%", true),
    ];

    private const int ExpertsPerPanel = 50;
    private const int ExpertPool = 200;
    private const int Rounds = 2;
    private const int Periods = 5;

    /// <summary>The rows of one panel: its experts answer every question-period in both rounds.</summary>
    private const int RowsPerPanel = ExpertsPerPanel * Rounds * Periods * 4;

    /// <summary>One generated forecast; the text of the file and the rows of the raw COPY both come from these.</summary>
    private readonly record struct Forecast(int Panel, int Round, int Expert, int Indicator, int Year, double? Value, double? P10, double? P50, double? P90);

    public static async Task<int> RunAsync(Options o)
    {
        var panels = Math.Max(1, o.Rows / RowsPerPanel);
        var pg = await PostgresServer.StartThrowawayAsync(fsync: true);
        AppProcess? app = null;
        var folder = Directory.CreateTempSubdirectory("panelround-import-");
        try
        {
            var connection = await Throughput.CreateDatabaseAsync(pg.ConnectionString, "panelround_import");
            app = new AppProcess(o.AppDll ?? throw new ArgumentException("--app PATH/TO/PanelRound.Web.dll is required."), connection);
            await app.RunCommandAsync("migrate");
            await app.StartAsync();
            var apiKey = await LoadPanel.ApiKeyAsync(app);
            var pid = app.ProcessId ?? throw new InvalidOperationException("The app has no process.");
            await using var raw = NpgsqlDataSource.Create(connection);
            using var http = new HttpClient { BaseAddress = app.BaseAddress, Timeout = TimeSpan.FromMinutes(10) };
            http.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", apiKey);

            var observations = Path.Combine(folder.FullName, "observations.csv");
            await File.WriteAllTextAsync(observations, ObservationsCsv());
            Console.WriteLine($"App ready (VmHWM {Memory(pid, "VmHWM")} MB). Warming up with an import and a COPY of {Math.Min(10, panels) * RowsPerPanel:N0} rows...");
            var warm = Generate(Math.Min(10, panels));
            await ImportAsync(http, await WriteCsvAsync(folder, "warm", warm), observations, warm.Count);
            await RawCopyAsync(raw, "warm", warm);

            var results = new List<(TimeSpan App, TimeSpan Raw, long PeakMb)>();
            for (var pair = 1; pair <= o.Pairs; pair++)
            {
                var rows = Generate(panels);
                var file = await WriteCsvAsync(folder, $"p{pair}", rows);
                var resetPeak = ResetPeak(pid);
                var appTime = await ImportAsync(http, file, observations, rows.Count);
                var peak = Memory(pid, "VmHWM");
                var rawTime = await RawCopyAsync(raw, $"p{pair}", rows);
                results.Add((appTime, rawTime, peak));
                Console.WriteLine(string.Create(Inv,
                    $"pair {pair}: import {appTime.TotalSeconds:F2} s, COPY {rawTime.TotalSeconds:F2} s, app VmHWM {peak} MB{(resetPeak ? " (this import)" : " (since start)")}"));
                File.Delete(file);
            }

            Console.WriteLine();
            Console.WriteLine(string.Create(Inv,
                $"Past-panel import on PostgreSQL (fsync on): {panels * RowsPerPanel:N0} forecast rows ({panels} panels x {ExpertsPerPanel} experts x {Rounds} rounds x 4 questions x {Periods} years) and {Indicators.Length * 20} observations, {o.Pairs} interleaved pairs."));
            Console.WriteLine("| pair | app import (s) | raw binary COPY (s) | ratio app/raw | app peak working set (VmHWM, MB) |");
            Console.WriteLine("|---|---|---|---|---|");
            var k = 0;
            foreach (var (a, r, peak) in results)
            {
                Console.WriteLine(string.Create(Inv, $"| {++k} | {a.TotalSeconds:F2} | {r.TotalSeconds:F2} | {a / r:F2} | {peak} |"));
            }
            Console.WriteLine(string.Create(Inv,
                $"median: import {Measure.Median(results.Select(x => x.App.TotalSeconds)):F2} s, COPY {Measure.Median(results.Select(x => x.Raw.TotalSeconds)):F2} s, ratio {Measure.Median(results.Select(x => x.App / x.Raw)):F2}; "
                + $"app peak over its life (VmHWM): {Memory(pid, "VmHWM")} MB; resident now (VmRSS): {Memory(pid, "VmRSS")} MB"));
            return 0;
        }
        finally
        {
            if (app is not null)
            {
                await app.DisposeAsync();
            }
            await pg.StopAsync();
            folder.Delete(recursive: true);
        }
    }

    /// <summary>Rows of <paramref name="panels"/> panels, every panel's rows together, in round, expert, question, year order.</summary>
    private static List<Forecast> Generate(int panels)
    {
        var random = new Random(20261203 + panels);
        var rows = new List<Forecast>(panels * RowsPerPanel);
        for (var p = 0; p < panels; p++)
        {
            var start = 2012 + p % 8;
            for (var round = 1; round <= Rounds; round++)
            {
                for (var j = 0; j < ExpertsPerPanel; j++)
                {
                    var expert = ((p * 37) + j) % ExpertPool;
                    for (var q = 0; q < Indicators.Length; q++)
                    {
                        for (var y = start + 1; y <= start + Periods; y++)
                        {
                            var mid = Math.Round(1000 + (3000 * random.NextDouble()), 1);
                            rows.Add(Indicators[q].Range
                                ? new Forecast(p, round, expert, q, y, null, Math.Round(mid * 0.9, 1), mid, Math.Round(mid * 1.12, 1))
                                : new Forecast(p, round, expert, q, y, mid, null, null, null));
                        }
                    }
                }
            }
        }
        return rows;
    }

    private static string PanelKey(string run, int panel) => $"{run}-panel-{panel:000}";

    private static string ExpertKey(int expert) => $"IMP-{expert:000}";

    private static async Task<string> WriteCsvAsync(DirectoryInfo folder, string run, List<Forecast> rows)
    {
        var path = Path.Combine(folder.FullName, run + ".csv");
        await using var w = new StreamWriter(path, false, new UTF8Encoding(false)) { NewLine = "\n" };
        await w.WriteLineAsync("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value,p10,p50,p90");
        foreach (var r in rows)
        {
            var start = 2012 + r.Panel % 8;
            var (key, unit, _) = Indicators[r.Indicator];
            await w.WriteLineAsync(string.Create(Inv,
                $"{PanelKey(run, r.Panel)},{start}-02-01,{start}-03-20,{key},{unit},{r.Year},{ExpertKey(r.Expert)},{r.Round},{r.Value},{r.P10},{r.P50},{r.P90}"));
        }
        return path;
    }

    private static string ObservationsCsv()
    {
        var o = new StringBuilder("indicator,period,value,source\n");
        foreach (var (key, _, _) in Indicators)
        {
            for (var y = 2006; y < 2026; y++)
            {
                o.Append(Inv, $"{key},{y},{1000 + (50 * (y - 2006))},Calderport land registry\n");
            }
        }
        return o.ToString();
    }

    /// <summary>Posts the two files and returns the time to the answer, which must be 200 with every row imported.</summary>
    private static async Task<TimeSpan> ImportAsync(HttpClient http, string forecasts, string observations, int expected)
    {
        await using var f = File.OpenRead(forecasts);
        await using var o = File.OpenRead(observations);
        using var form = new MultipartFormDataContent();
        foreach (var (name, stream) in new[] { ("forecasts", f), ("observations", o) })
        {
            var part = new StreamContent(stream, 64 * 1024);
            part.Headers.ContentType = new MediaTypeHeaderValue("text/csv");
            form.Add(part, name, name + ".csv");
        }
        var clock = Stopwatch.StartNew();
        using var response = await http.PostAsync(new Uri("api/imports/past-panels", UriKind.Relative), form);
        var text = await response.Content.ReadAsStringAsync();
        clock.Stop();
        if (!response.IsSuccessStatusCode)
        {
            throw new InvalidOperationException($"The import answered {(int)response.StatusCode}: {text[..Math.Min(text.Length, 2000)]}");
        }
        var imported = (int)JsonNode.Parse(text)!["estimates"]!;
        return imported == expected ? clock.Elapsed : throw new InvalidOperationException($"The import stored {imported} estimates, not {expected}.");
    }

    /// <summary>
    /// The same rows as the import of <paramref name="run"/> stored, with the ids of its rounds, memberships
    /// and questions, COPYed in binary into the same table (looked up before the clock starts).
    /// </summary>
    private static async Task<TimeSpan> RawCopyAsync(NpgsqlDataSource raw, string run, List<Forecast> rows)
    {
        var rounds = new Dictionary<(string, int), int>();
        var members = new Dictionary<(string, string), int>();
        var questions = new Dictionary<(string, string), int>();
        await using (var conn = await raw.OpenConnectionAsync())
        {
            async Task ReadAsync(string sql, Action<NpgsqlDataReader> add)
            {
                await using var cmd = new NpgsqlCommand(sql, conn);
                cmd.Parameters.AddWithValue("run", run + "-%");
                await using var reader = await cmd.ExecuteReaderAsync();
                while (await reader.ReadAsync())
                {
                    add(reader);
                }
            }
            await ReadAsync("SELECT p.\"ExternalKey\", r.\"Number\", r.\"Id\" FROM \"Rounds\" r JOIN \"Panels\" p ON p.\"Id\" = r.\"PanelId\" WHERE p.\"ExternalKey\" LIKE @run",
                r => rounds[(r.GetString(0), r.GetInt32(1))] = r.GetInt32(2));
            await ReadAsync("SELECT p.\"ExternalKey\", e.\"ExternalKey\", m.\"Id\" FROM \"Memberships\" m JOIN \"Panels\" p ON p.\"Id\" = m.\"PanelId\" JOIN \"Experts\" e ON e.\"Id\" = m.\"ExpertId\" WHERE p.\"ExternalKey\" LIKE @run",
                r => members[(r.GetString(0), r.GetString(1))] = r.GetInt32(2));
            await ReadAsync("SELECT p.\"ExternalKey\", i.\"Key\", q.\"Id\" FROM \"Questions\" q JOIN \"Panels\" p ON p.\"Id\" = q.\"PanelId\" JOIN \"Indicators\" i ON i.\"Id\" = q.\"IndicatorId\" WHERE p.\"ExternalKey\" LIKE @run",
                r => questions[(r.GetString(0), r.GetString(1))] = r.GetInt32(2));
        }
        var createdAt = new DateTime(2020, 3, 20, 0, 0, 0, DateTimeKind.Utc);
        var prepared = rows.Select(r =>
        {
            var panel = PanelKey(run, r.Panel);
            return (Round: rounds[(panel, r.Round)], Member: members[(panel, ExpertKey(r.Expert))], Question: questions[(panel, Indicators[r.Indicator].Key)],
                Period: r.Year.ToString(Inv), r.Value, r.P10, r.P50, r.P90);
        }).ToList();

        var clock = Stopwatch.StartNew();
        await using (var conn = await raw.OpenConnectionAsync())
        {
            await using var copy = await conn.BeginBinaryImportAsync(
                "COPY \"Estimates\" (\"RoundId\", \"MembershipId\", \"QuestionId\", \"Period\", \"Value\", \"P10\", \"P50\", \"P90\", \"IsDraft\", \"CreatedAt\") FROM STDIN (FORMAT BINARY)");
            foreach (var r in prepared)
            {
                await copy.StartRowAsync();
                await copy.WriteAsync(r.Round, NpgsqlDbType.Integer);
                await copy.WriteAsync(r.Member, NpgsqlDbType.Integer);
                await copy.WriteAsync(r.Question, NpgsqlDbType.Integer);
                await copy.WriteAsync(r.Period, NpgsqlDbType.Varchar);
                foreach (var v in new[] { r.Value, r.P10, r.P50, r.P90 })
                {
                    if (v is { } x)
                    {
                        await copy.WriteAsync(x, NpgsqlDbType.Double);
                    }
                    else
                    {
                        await copy.WriteNullAsync();
                    }
                }
                await copy.WriteAsync(false, NpgsqlDbType.Boolean);
                await copy.WriteAsync(createdAt, NpgsqlDbType.TimestampTz);
            }
            var written = await copy.CompleteAsync();
            if (written != (ulong)rows.Count)
            {
                throw new InvalidOperationException($"COPY wrote {written} rows, not {rows.Count}.");
            }
        }
        return clock.Elapsed;
    }

    /// <summary>A memory figure of the process from /proc/PID/status (VmHWM: the peak resident set; VmRSS: now), in MB.</summary>
    private static long Memory(int pid, string field)
    {
        foreach (var line in File.ReadLines($"/proc/{pid}/status"))
        {
            if (line.StartsWith(field + ":", StringComparison.Ordinal))
            {
                return long.Parse(line[(field.Length + 1)..].Trim().Split(' ')[0], Inv) / 1024;
            }
        }
        throw new InvalidOperationException($"/proc/{pid}/status has no {field}.");
    }

    /// <summary>Resets the process's peak resident set to its current one (Linux: 5 to /proc/PID/clear_refs); false when not allowed.</summary>
    private static bool ResetPeak(int pid)
    {
        try
        {
            File.WriteAllText($"/proc/{pid}/clear_refs", "5");
            return true;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return false;
        }
    }
}
