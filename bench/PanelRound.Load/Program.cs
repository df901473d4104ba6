using System.Globalization;

namespace PanelRound.Load;

/// <summary>Settings of a load run, from <c>--name value</c> pairs.</summary>
internal sealed record Options(
    string? AppDll, string? Url, string? Connection, string? ApiKey, int Experts, int Questions, int Clients, int Kills, double LoadSeconds, int Pairs, int Rows,
    string Provider, int? Panel, string Email, string Password, int Requests, bool RawPrepared)
{
    public static Options Parse(string[] args)
    {
        string? Get(string name)
        {
            var i = Array.IndexOf(args, name);
            return i >= 0 && i + 1 < args.Length ? args[i + 1] : null;
        }
        int Int(string name, int fallback) => Get(name) is { } v ? int.Parse(v, CultureInfo.InvariantCulture) : fallback;
        return new Options(Get("--app") is { } app ? Path.GetFullPath(app) : null, Get("--url"), Get("--connection"), Get("--api-key"),
            Int("--experts", 100), Int("--questions", 4), Int("--clients", 16), Int("--kills", 2),
            Get("--load-seconds") is { } s ? double.Parse(s, CultureInfo.InvariantCulture) : 6, Int("--pairs", 3), Int("--rows", 100_000),
            Get("--provider") ?? "Sqlite", Get("--panel") is { } panel ? int.Parse(panel, CultureInfo.InvariantCulture) : null,
            // The demo's facilitator (demo-data/panels.json): public, demo only.
            Get("--email") ?? "facilitator@calderport-demo.example", Get("--password") ?? "Demo-Facilitator-2026", Int("--requests", 30),
            args.Contains("--raw-prepared"));
    }
}

/// <summary>
/// Load and fault drivers for a running PanelRound on PostgreSQL (see DEVELOPERS.md):
/// <c>crash-recovery --app PanelRound.Web.dll [--clients 16] [--experts 100] [--kills 2] [--load-seconds 6]</c>;
/// <c>throughput (--app PanelRound.Web.dll | --url URL --connection CS --api-key KEY) [--experts 500] [--questions 4] [--clients 32] [--pairs 3] [--raw-prepared]</c>;
/// <c>import --app PanelRound.Web.dll [--rows 100000] [--pairs 3]</c>;
/// <c>results (--app PanelRound.Web.dll [--provider Sqlite|Postgres] | --url URL [--panel ID] [--email E --password P]) [--requests 30] [--pairs 3]</c>.
/// </summary>
public static class LoadProgram
{
    public static async Task<int> Main(string[] args)
    {
        if (args.Length == 0)
        {
            Console.Error.WriteLine("usage: PanelRound.Load crash-recovery --app PATH/TO/PanelRound.Web.dll [--clients N] [--experts N] [--kills N] [--load-seconds S]");
            Console.Error.WriteLine("       PanelRound.Load throughput (--app PATH/TO/PanelRound.Web.dll | --url URL --connection CS --api-key KEY) [--experts N] [--questions N] [--clients N] [--pairs N] [--raw-prepared]");
            Console.Error.WriteLine("       PanelRound.Load import --app PATH/TO/PanelRound.Web.dll [--rows N] [--pairs N]");
            Console.Error.WriteLine("       PanelRound.Load results (--app PATH/TO/PanelRound.Web.dll [--provider Sqlite|Postgres] | --url URL [--panel ID] [--email E --password P]) [--requests N] [--pairs N]");
            return 2;
        }
        var options = Options.Parse(args[1..]);
        return args[0] switch
        {
            "crash-recovery" => await CrashRecovery.RunAsync(options),
            "throughput" => await Throughput.RunAsync(options),
            "import" => await ImportThroughput.RunAsync(options),
            "results" => await ResultsPage.RunAsync(options),
            _ => throw new ArgumentException($"Unknown command '{args[0]}'."),
        };
    }
}
