using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Load;

/// <summary>
/// The staff results page against the results API of the same panel: signed in through the sign-in
/// page with a staff cookie, one client, after a warm-up; in each pair of batches the two requests
/// alternate (page, API, API, page, ...), so both see the same machine. Prints p50 / p95 of each
/// batch, the ratio of the p50s per pair and the median of those ratios.
/// </summary>
/// <remarks>
/// With <c>--app</c> the driver starts the app with the demo loaded into a new database (SQLite in a
/// temporary folder, or a throwaway PostgreSQL with <c>--provider Postgres</c>) and measures the demo's
/// running panel; with <c>--url</c> it measures a running app (by default its newest running panel).
/// </remarks>
internal static partial class ResultsPage
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    public static async Task<int> RunAsync(Options o)
    {
        PostgresServer.Throwaway? pg = null;
        AppProcess? app = null;
        string? folder = null;
        try
        {
            Uri baseAddress;
            if (o.Url is { } url)
            {
                baseAddress = new Uri(url.EndsWith('/') ? url : url + "/");
            }
            else
            {
                var dll = o.AppDll ?? throw new ArgumentException("Give --app PanelRound.Web.dll (the demo in a new database), or --url of a running app.");
                var environment = new Dictionary<string, string>
                {
                    // The demo is refused in Production: its passwords are public.
                    ["ASPNETCORE_ENVIRONMENT"] = "Staging",
                    ["Demo__Enabled"] = "true",
                    // Plain http on the loopback: the sign-in and antiforgery cookies without the Secure flag, as in Development.
                    ["Security__SecureCookies"] = "false",
                };
                string connection;
                if (string.Equals(o.Provider, "Postgres", StringComparison.OrdinalIgnoreCase))
                {
                    pg = await PostgresServer.StartThrowawayAsync(fsync: true);
                    connection = await Throughput.CreateDatabaseAsync(pg.ConnectionString, "panelround_results");
                }
                else
                {
                    folder = Directory.CreateTempSubdirectory("panelround-results-").FullName;
                    environment["Database__Provider"] = "Sqlite";
                    environment["ConnectionStrings__Sqlite"] = $"Data Source={Path.Combine(folder, "panelround.db")}";
                    connection = "";
                }
                app = new AppProcess(dll, connection, environment);
                if (pg is not null)
                {
                    await app.RunCommandAsync("migrate");
                }
                Console.WriteLine($"Starting the app with the demo on {(pg is null ? "SQLite" : "PostgreSQL")}...");
                var started = await app.StartAsync();
                Console.WriteLine(string.Create(Inv, $"  ready after {started.TotalSeconds:F1} s"));
                baseAddress = app.BaseAddress;
            }

            using var handler = new SocketsHttpHandler { CookieContainer = new CookieContainer(), AllowAutoRedirect = false };
            using var http = new HttpClient(handler) { BaseAddress = baseAddress, Timeout = TimeSpan.FromSeconds(60) };
            await SignInAsync(http, o.Email, o.Password);
            var panelId = o.Panel ?? await RunningPanelAsync(http);
            var page = $"Staff/Panels/Results/{panelId}";
            var api = $"api/panels/{panelId}/results";
            Console.WriteLine($"Panel {panelId}: GET /{page} (HTML, staff cookie) against GET /{api} (JSON, same cookie); "
                + $"{o.Requests} requests of each per pair, {o.Pairs} pairs, one client.");

            for (var i = 0; i < Math.Max(5, o.Requests / 3); i++)
            {
                await TimedGetAsync(http, page);
                await TimedGetAsync(http, api);
            }

            var pairs = new List<(Batch Page, Batch Api)>();
            for (var pair = 0; pair < o.Pairs; pair++)
            {
                var pageTimes = new List<double>();
                var apiTimes = new List<double>();
                var errors = new List<string>();
                for (var i = 0; i < o.Requests; i++)
                {
                    // Alternate which goes first, so neither always follows the other.
                    var pageFirst = (i + pair) % 2 == 0;
                    foreach (var isPage in pageFirst ? new[] { true, false } : [false, true])
                    {
                        var (ms, status) = await TimedGetAsync(http, isPage ? page : api);
                        (isPage ? pageTimes : apiTimes).Add(ms);
                        if (status != HttpStatusCode.OK)
                        {
                            errors.Add($"{(isPage ? "page" : "api")}:{(int)status}");
                        }
                    }
                }
                pairs.Add((Batch.Of(pageTimes, errors.Count(e => e.StartsWith("page", StringComparison.Ordinal))),
                    Batch.Of(apiTimes, errors.Count(e => e.StartsWith("api", StringComparison.Ordinal)))));
            }

            Console.WriteLine();
            Console.WriteLine("| pair | page p50 / p95 ms | errors | API p50 / p95 ms | errors | ratio page/API (p50) |");
            Console.WriteLine("|---|---|---|---|---|---|");
            var k = 0;
            foreach (var (p, a) in pairs)
            {
                Console.WriteLine(string.Create(Inv, $"| {++k} | {p.P50:F1} / {p.P95:F1} | {p.Errors} | {a.P50:F1} / {a.P95:F1} | {a.Errors} | {p.P50 / a.P50:F2} |"));
            }
            Console.WriteLine(string.Create(Inv, $"median ratio page/API: {Measure.Median(pairs.Select(x => x.Page.P50 / x.Api.P50)):F2}"));
            return pairs.Sum(x => x.Page.Errors + x.Api.Errors) == 0 ? 0 : 1;
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
            if (folder is not null)
            {
                Directory.Delete(folder, recursive: true);
            }
        }
    }

    private sealed record Batch(double P50, double P95, int Errors)
    {
        public static Batch Of(List<double> ms, int errors)
        {
            var sorted = ms.Order().ToArray();
            double At(double q) => sorted[Math.Min(sorted.Length - 1, (int)Math.Ceiling(q * sorted.Length) - 1)];
            return new Batch(Measure.Median(sorted), At(0.95), errors);
        }
    }

    /// <summary>One GET, its body read to the end; milliseconds and status.</summary>
    private static async Task<(double Ms, HttpStatusCode Status)> TimedGetAsync(HttpClient http, string url)
    {
        var start = Stopwatch.GetTimestamp();
        using var response = await http.GetAsync(new Uri(url, UriKind.Relative), HttpCompletionOption.ResponseContentRead);
        await response.Content.ReadAsByteArrayAsync();
        return (Stopwatch.GetElapsedTime(start).TotalMilliseconds, response.StatusCode);
    }

    /// <summary>Signs in through the sign-in page, as a browser does (the form's antiforgery token, then the cookie).</summary>
    private static async Task SignInAsync(HttpClient http, string email, string password)
    {
        var form = await http.GetStringAsync(new Uri("Account/Login", UriKind.Relative));
        var token = AntiForgery().Match(form) is { Success: true } m ? m.Groups[1].Value : throw new InvalidOperationException("The sign-in page has no antiforgery token.");
        using var body = new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Input.Email"] = email,
            ["Input.Password"] = password,
            ["__RequestVerificationToken"] = token,
        });
        using var response = await http.PostAsync(new Uri("Account/Login", UriKind.Relative), body);
        if (response.StatusCode != HttpStatusCode.Redirect || response.Headers.Location?.OriginalString.Contains("Account/Login", StringComparison.Ordinal) == true)
        {
            throw new InvalidOperationException($"Sign-in as {email} failed: {(int)response.StatusCode} {response.Headers.Location}");
        }
    }

    /// <summary>The newest panel in state Running.</summary>
    private static async Task<int> RunningPanelAsync(HttpClient http)
    {
        var panels = JsonNode.Parse(await http.GetStringAsync(new Uri("api/panels", UriKind.Relative)))!.AsArray();
        var running = panels.FirstOrDefault(p => (string?)p!["state"] == "Running")
            ?? throw new InvalidOperationException("No running panel: give --panel ID.");
        return (int)running!["id"]!;
    }

    [GeneratedRegex("name=\"__RequestVerificationToken\" type=\"hidden\" value=\"([^\"]+)\"")]
    private static partial Regex AntiForgery();
}
