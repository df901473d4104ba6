using System.Collections.Concurrent;
using System.Net.Http.Json;
using Npgsql;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Load;

/// <summary>
/// Crash recovery: the app on PostgreSQL with fsync on, expert submissions driven by concurrent
/// clients, the serving process killed with SIGKILL during the load (twice by default) and started
/// again; at the end every submission that was acknowledged with a 2xx must be in the database.
/// Each submission carries a unique marker (its first question's rationale) to be found by.
/// </summary>
internal static class CrashRecovery
{
    public static async Task<int> RunAsync(Options o)
    {
        var pg = await PostgresServer.StartThrowawayAsync(fsync: true);
        try
        {
            var db = new NpgsqlConnectionStringBuilder(pg.ConnectionString) { Database = "panelround_crash" }.ToString();
            await using (var admin = new NpgsqlConnection(pg.ConnectionString))
            {
                await admin.OpenAsync();
                await using var create = new NpgsqlCommand("CREATE DATABASE panelround_crash", admin);
                await create.ExecuteNonQueryAsync();
            }
            await using var app = new AppProcess(o.AppDll ?? throw new ArgumentException("--app PATH/TO/PanelRound.Web.dll is required."), db);
            await app.RunCommandAsync("migrate");
            var first = await app.StartAsync();
            Console.WriteLine($"App ready in {first.TotalSeconds:F1} s; setting up {o.Experts} experts x {o.Questions * 5} values.");
            var panel = await LoadPanel.CreateAsync(app, o.Experts, o.Questions);

            var acknowledged = new ConcurrentDictionary<long, bool>();
            var statuses = new ConcurrentDictionary<string, int>();
            long seq = 0;
            using var stop = new CancellationTokenSource();
            using var handler = new SocketsHttpHandler { MaxConnectionsPerServer = o.Clients, PooledConnectionLifetime = TimeSpan.FromSeconds(5) };
            using var http = new HttpClient(handler) { BaseAddress = app.BaseAddress, Timeout = TimeSpan.FromSeconds(30) };
            async Task WorkerAsync()
            {
                while (!stop.IsCancellationRequested)
                {
                    var n = Interlocked.Increment(ref seq);
                    var marker = $"crash-{n}";
                    using var request = new HttpRequestMessage(HttpMethod.Post, $"api/expert/panels/{panel.PanelId}/estimates")
                    {
                        Content = JsonContent.Create(panel.Submission(marker, 4000 + (n % 500))),
                    };
                    request.Headers.Add("X-Expert-Token", panel.Tokens[n % panel.Tokens.Length]);
                    try
                    {
                        using var r = await http.SendAsync(request);
                        statuses.AddOrUpdate(((int)r.StatusCode).ToString(System.Globalization.CultureInfo.InvariantCulture), 1, (_, c) => c + 1);
                        if (r.IsSuccessStatusCode)
                        {
                            acknowledged[n] = true;
                        }
                    }
                    catch (Exception e) when (e is HttpRequestException or TaskCanceledException)
                    {
                        // Refused or cut off while the app was down: never acknowledged, so never owed.
                        statuses.AddOrUpdate("no answer", 1, (_, c) => c + 1);
                        await Task.Delay(20);
                    }
                }
            }
            var workers = Enumerable.Range(0, o.Clients).Select(_ => Task.Run(WorkerAsync)).ToList();
            var report = new List<string>();
            for (var k = 1; k <= o.Kills; k++)
            {
                await Task.Delay(TimeSpan.FromSeconds(o.LoadSeconds));
                var before = acknowledged.Count;
                await app.KillAsync();
                var ready = await app.StartAsync();
                report.Add($"kill {k}: SIGKILL after {before} acknowledged submissions; healthy again after {ready.TotalSeconds:F2} s");
                Console.WriteLine(report[^1]);
            }
            await Task.Delay(TimeSpan.FromSeconds(o.LoadSeconds));
            await stop.CancelAsync();
            await Task.WhenAll(workers);

            var found = new HashSet<long>();
            await using (var conn = new NpgsqlConnection(db))
            {
                await conn.OpenAsync();
                await using var cmd = new NpgsqlCommand("SELECT DISTINCT \"Rationale\" FROM \"Estimates\" WHERE \"Rationale\" LIKE 'crash-%'", conn);
                await using var reader = await cmd.ExecuteReaderAsync();
                while (await reader.ReadAsync())
                {
                    found.Add(long.Parse(reader.GetString(0)["crash-".Length..], System.Globalization.CultureInfo.InvariantCulture));
                }
            }
            var missing = acknowledged.Keys.Where(k => !found.Contains(k)).Order().ToList();
            Console.WriteLine();
            Console.WriteLine($"Crash recovery on PostgreSQL (fsync on), {o.Clients} clients, {o.Experts} experts, {panel.ValuesPerSubmission} values per submission:");
            foreach (var line in report)
            {
                Console.WriteLine("  " + line);
            }
            Console.WriteLine($"  answers: {string.Join(", ", statuses.OrderBy(s => s.Key, StringComparer.Ordinal).Select(s => $"{s.Key}: {s.Value}"))}");
            Console.WriteLine($"  acknowledged (2xx): {acknowledged.Count}; found in the database: {acknowledged.Keys.Count(found.Contains)}; missing: {missing.Count}");
            Console.WriteLine($"  stored without an acknowledgement (committed as the process died): {found.Count(f => !acknowledged.ContainsKey(f))}");
            if (missing.Count > 0)
            {
                Console.WriteLine($"  FAILED: acknowledged but missing: {string.Join(", ", missing.Take(20))}");
                return 1;
            }
            Console.WriteLine("  OK: every acknowledged submission is in the database.");
            return 0;
        }
        finally
        {
            await pg.StopAsync();
        }
    }
}
