using System.Globalization;
using System.Net.Http.Json;
using Npgsql;
using NpgsqlTypes;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Load;

/// <summary>
/// The deadline rush: N experts each submitting M values at concurrency C through the app, against
/// the raw Npgsql insert of the same rows (one transaction per expert) on the same server,
/// interleaved in pairs; then the expert form GET against a raw read of the same rows.
/// Prints one table per measure with the ratio of each pair and the median ratio.
/// </summary>
internal static class Throughput
{
    public static async Task<int> RunAsync(Options o)
    {
        PostgresServer.Throwaway? pg = null;
        AppProcess? app = null;
        try
        {
            string connection;
            Uri baseAddress;
            string apiKey;
            if (o.Url is { } url)
            {
                connection = o.Connection ?? throw new ArgumentException("--url needs --connection (the app's PostgreSQL connection string).");
                apiKey = o.ApiKey ?? throw new ArgumentException("--url needs --api-key (a Facilitator API key: the app's create-api-key command).");
                baseAddress = new Uri(url.EndsWith('/') ? url : url + "/");
            }
            else
            {
                pg = await PostgresServer.StartThrowawayAsync(fsync: true, maxConnections: 300);
                connection = await CreateDatabaseAsync(pg.ConnectionString, "panelround_load");
                app = new AppProcess(o.AppDll ?? throw new ArgumentException("Give --app PanelRound.Web.dll, or --url with --connection and --api-key."), connection);
                await app.RunCommandAsync("migrate");
                await app.StartAsync();
                baseAddress = app.BaseAddress;
                apiKey = await LoadPanel.ApiKeyAsync(app);
            }
            Console.WriteLine($"Setting up a panel of {o.Experts} experts x {o.Questions * 5} values...");
            var panel = await LoadPanel.CreateAsync(baseAddress, apiKey, o.Experts, o.Questions);
            // The raw side as Npgsql comes (statements unprepared), or with --raw-prepared prepared as the app prepares its own.
            await using var raw = new NpgsqlDataSourceBuilder(new NpgsqlConnectionStringBuilder(connection)
            {
                MaxPoolSize = Math.Max(100, o.Clients * 2), MaxAutoPrepare = o.RawPrepared ? 64 : 0,
            }.ToString()).Build();
            var ids = await RowIdsAsync(raw, panel);

            using var handler = new SocketsHttpHandler { MaxConnectionsPerServer = o.Clients };
            using var http = new HttpClient(handler) { BaseAddress = baseAddress, Timeout = TimeSpan.FromSeconds(60) };
            await WarmUpAsync(http, raw, panel, ids);

            var submissions = new List<(Run App, Run Raw)>();
            var reads = new List<(Run App, Run Raw)>();
            for (var pair = 0; pair < o.Pairs; pair++)
            {
                var appRun = await Measure.RunAsync(panel.Tokens.Length, o.Clients, i => SubmitAsync(http, panel, i, pair), app?.ProcessId);
                var rawRun = await Measure.RunAsync(panel.Tokens.Length, o.Clients, i => RawInsertAsync(raw, panel, ids, i, pair));
                submissions.Add((appRun, rawRun));
                var appGet = await Measure.RunAsync(panel.Tokens.Length, o.Clients, i => GetFormAsync(http, panel, i), app?.ProcessId);
                var rawGet = await Measure.RunAsync(panel.Tokens.Length, o.Clients, i => RawReadAsync(raw, panel, ids, i));
                reads.Add((appGet, rawGet));
            }
            Console.WriteLine();
            Console.WriteLine($"PostgreSQL (fsync on), {o.Experts} experts x {panel.ValuesPerSubmission} values, {o.Clients} clients, {o.Pairs} interleaved pairs, raw statements {(o.RawPrepared ? "prepared" : "unprepared")}.");
            Print("Submissions (values/s)", submissions, panel.ValuesPerSubmission);
            Print("Expert form GET (requests/s)", reads, 1);
            return submissions.Concat(reads).Sum(p => p.App.Errors) == 0 ? 0 : 1;
        }
        finally
        {
            if (app is not null)
            {
                await app.DisposeAsync();
            }
            if (pg is not null)
            {
                await pg.StopAsync();
            }
        }
    }

    private static void Print(string title, List<(Run App, Run Raw)> pairs, int units)
    {
        Console.WriteLine();
        Console.WriteLine($"{title}");
        Console.WriteLine("| pair | app | p50 / p95 / p99 ms | errors | raw | raw p50 / p95 / p99 ms | ratio |");
        Console.WriteLine("|---|---|---|---|---|---|---|");
        var k = 0;
        foreach (var (a, r) in pairs)
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"| {++k} | {a.PerSecond(units):F0} | {a.P50Ms:F0} / {a.P95Ms:F0} / {a.P99Ms:F0} | {a.Errors} ({a.Statuses}) | {r.PerSecond(units):F0} | {r.P50Ms:F0} / {r.P95Ms:F0} / {r.P99Ms:F0} | {a.PerSecond(units) / r.PerSecond(units):F2} |"));
        }
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"median ratio app/raw: {Measure.Median(pairs.Select(p => p.App.PerSecond(units) / p.Raw.PerSecond(units))):F2}"));
        if (pairs.All(p => p.App.Cpu is not null && p.Raw.Cpu is not null))
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"CPU ms per operation (medians), app: app process {Measure.Median(pairs.Select(p => p.App.Cpu!.AppMs)):F2}, driver {Measure.Median(pairs.Select(p => p.App.Cpu!.DriverMs)):F2}, rest (database) {Measure.Median(pairs.Select(p => p.App.Cpu!.RestMs)):F2}, machine busy {Measure.Median(pairs.Select(p => p.App.Cpu!.Busy)):P0}"));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"CPU ms per operation (medians), raw: driver {Measure.Median(pairs.Select(p => p.Raw.Cpu!.DriverMs)):F2}, rest (database) {Measure.Median(pairs.Select(p => p.Raw.Cpu!.RestMs)):F2}, machine busy {Measure.Median(pairs.Select(p => p.Raw.Cpu!.Busy)):P0}"));
        }
    }

    private sealed record Ids(int RoundId, int PanelId, int[] Memberships, int IndicatorId);

    /// <summary>Creates a database on the server and returns its connection string.</summary>
    internal static async Task<string> CreateDatabaseAsync(string admin, string name)
    {
        await using var conn = new NpgsqlConnection(admin);
        await conn.OpenAsync();
        await using var create = new NpgsqlCommand($"CREATE DATABASE {name}", conn);
        await create.ExecuteNonQueryAsync();
        return new NpgsqlConnectionStringBuilder(admin) { Database = name }.ToString();
    }

    private static async Task<Ids> RowIdsAsync(NpgsqlDataSource raw, LoadPanel panel)
    {
        await using var conn = await raw.OpenConnectionAsync();
        async Task<List<int>> ReadAsync(string sql)
        {
            await using var cmd = new NpgsqlCommand(sql, conn);
            cmd.Parameters.AddWithValue("p", panel.PanelId);
            var list = new List<int>();
            await using var r = await cmd.ExecuteReaderAsync();
            while (await r.ReadAsync())
            {
                list.Add(r.GetInt32(0));
            }
            return list;
        }
        var round = (await ReadAsync("SELECT \"Id\" FROM \"Rounds\" WHERE \"PanelId\" = @p AND \"Number\" = 1"))[0];
        var members = await ReadAsync("SELECT \"Id\" FROM \"Memberships\" WHERE \"PanelId\" = @p ORDER BY \"Id\"");
        var indicator = (await ReadAsync("SELECT \"IndicatorId\" FROM \"Questions\" WHERE \"PanelId\" = @p LIMIT 1"))[0];
        return new Ids(round, panel.PanelId, [.. members], indicator);
    }

    private static async Task WarmUpAsync(HttpClient http, NpgsqlDataSource raw, LoadPanel panel, Ids ids)
    {
        for (var i = 0; i < Math.Min(20, panel.Tokens.Length); i++)
        {
            await SubmitAsync(http, panel, i, -1);
            await GetFormAsync(http, panel, i);
            await RawInsertAsync(raw, panel, ids, i, -1);
            await RawReadAsync(raw, panel, ids, i);
        }
    }

    private static async Task<string> SubmitAsync(HttpClient http, LoadPanel panel, int i, int pass)
    {
        using var request = new HttpRequestMessage(HttpMethod.Post, $"api/expert/panels/{panel.PanelId}/estimates")
        {
            Content = JsonContent.Create(panel.Submission($"load {pass}", 4000 + i)),
        };
        request.Headers.Add("X-Expert-Token", panel.Tokens[i]);
        using var response = await http.SendAsync(request);
        return ((int)response.StatusCode).ToString(CultureInfo.InvariantCulture);
    }

    private static async Task<string> GetFormAsync(HttpClient http, LoadPanel panel, int i)
    {
        using var request = new HttpRequestMessage(HttpMethod.Get, $"api/expert/panels/{panel.PanelId}");
        request.Headers.Add("X-Expert-Token", panel.Tokens[i]);
        using var response = await http.SendAsync(request);
        await response.Content.ReadAsByteArrayAsync();
        return ((int)response.StatusCode).ToString(CultureInfo.InvariantCulture);
    }

    /// <summary>The same rows the app stores for one submission, in one transaction, batched.</summary>
    private static async Task<string> RawInsertAsync(NpgsqlDataSource raw, LoadPanel panel, Ids ids, int i, int pass)
    {
        await using var conn = await raw.OpenConnectionAsync();
        await using var tx = await conn.BeginTransactionAsync();
        await using var batch = new NpgsqlBatch(conn, tx);
        var now = DateTime.UtcNow;
        for (var q = 0; q < panel.Questions.Length; q++)
        {
            foreach (var period in panel.Periods)
            {
                var cmd = new NpgsqlBatchCommand("INSERT INTO \"Estimates\" (\"RoundId\", \"MembershipId\", \"QuestionId\", \"Period\", \"Value\", \"Rationale\", \"IsDraft\", \"CreatedAt\") "
                    + "VALUES ($1, $2, $3, $4, $5, $6, false, $7)");
                cmd.Parameters.Add(new NpgsqlParameter { Value = ids.RoundId });
                cmd.Parameters.Add(new NpgsqlParameter { Value = ids.Memberships[i] });
                cmd.Parameters.Add(new NpgsqlParameter { Value = panel.Questions[q] });
                cmd.Parameters.Add(new NpgsqlParameter { Value = period });
                cmd.Parameters.Add(new NpgsqlParameter { Value = 4000.0 + i });
                cmd.Parameters.Add(new NpgsqlParameter { Value = q == 0 ? $"raw {pass}" : DBNull.Value, NpgsqlDbType = NpgsqlDbType.Varchar });
                cmd.Parameters.Add(new NpgsqlParameter { Value = now, NpgsqlDbType = NpgsqlDbType.TimestampTz });
                batch.BatchCommands.Add(cmd);
            }
        }
        await batch.ExecuteNonQueryAsync();
        await tx.CommitAsync();
        return "ok";
    }

    /// <summary>A raw read of the rows behind one expert's form: membership, questions, own answers, feedback, reference series.</summary>
    private static async Task<string> RawReadAsync(NpgsqlDataSource raw, LoadPanel panel, Ids ids, int i)
    {
        await using var conn = await raw.OpenConnectionAsync();
        await using var batch = new NpgsqlBatch(conn);
        void Add(string sql, int value)
        {
            var cmd = new NpgsqlBatchCommand(sql);
            cmd.Parameters.Add(new NpgsqlParameter { Value = value });
            batch.BatchCommands.Add(cmd);
        }
        Add("SELECT * FROM \"Memberships\" WHERE \"Id\" = $1", ids.Memberships[i]);
        Add("SELECT * FROM \"Panels\" p JOIN \"Questions\" q ON q.\"PanelId\" = p.\"Id\" JOIN \"Indicators\" i ON i.\"Id\" = q.\"IndicatorId\" WHERE p.\"Id\" = $1", ids.PanelId);
        Add("SELECT * FROM \"Rounds\" WHERE \"PanelId\" = $1", ids.PanelId);
        Add("SELECT * FROM \"Estimates\" WHERE \"MembershipId\" = $1", ids.Memberships[i]);
        Add("SELECT * FROM \"RoundFeedback\" WHERE \"RoundId\" = $1", ids.RoundId);
        Add("SELECT * FROM \"Observations\" WHERE \"IndicatorId\" = $1", ids.IndicatorId);
        await using var reader = await batch.ExecuteReaderAsync();
        do
        {
            while (await reader.ReadAsync())
            {
            }
        }
        while (await reader.NextResultAsync());
        return "ok";
    }
}
