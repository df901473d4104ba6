using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using Npgsql;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>
/// The PostgreSQL the tests run against: the server named by <c>PANELROUND_TEST_PG</c> when set,
/// otherwise a throwaway server started from the local binaries (initdb in a temp folder, run as
/// the <c>postgres</c> user when the process is root, on 127.0.0.1 and a free port), stopped when
/// the test process exits. Under <c>CI=true</c> an unavailable PostgreSQL fails the tests instead
/// of skipping them.
/// </summary>
public static class PostgresServer
{
    private static readonly Lazy<Task<string>> Server = new(StartAsync);

    public static bool IsCi => string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase);

    /// <summary>Why PostgreSQL tests cannot run here, or null when they can (or must, under CI).</summary>
    public static string? UnavailableReason()
    {
        if (!string.IsNullOrWhiteSpace(Environment.GetEnvironmentVariable("PANELROUND_TEST_PG")) || FindBinDir() is not null)
        {
            return null;
        }
        return "PostgreSQL tests NOT RUN: no PANELROUND_TEST_PG connection string and no initdb/pg_ctl found "
            + "(apt-get install -y postgresql). Under CI=true this is a failure.";
    }

    /// <summary>A fresh, empty database on the shared server.</summary>
    public static async Task<string> CreateDatabaseAsync(string prefix)
    {
        var admin = await Server.Value;
        var name = $"{prefix}_{Guid.NewGuid():N}".ToLowerInvariant();
        await using (var conn = new NpgsqlConnection(admin))
        {
            await conn.OpenAsync();
            await using var cmd = new NpgsqlCommand($"CREATE DATABASE \"{name}\"", conn);
            await cmd.ExecuteNonQueryAsync();
        }
        return new NpgsqlConnectionStringBuilder(admin) { Database = name, Pooling = true }.ToString();
    }

    private static async Task<string> StartAsync()
    {
        var given = Environment.GetEnvironmentVariable("PANELROUND_TEST_PG");
        if (!string.IsNullOrWhiteSpace(given))
        {
            return given;
        }
        var server = await StartThrowawayAsync(fsync: false);
        AppDomain.CurrentDomain.ProcessExit += (_, _) => server.StopAsync().GetAwaiter().GetResult();
        return server.ConnectionString;
    }

    /// <summary>A running throwaway server, and how to stop it and delete its files.</summary>
    public sealed record Throwaway(string ConnectionString, Func<Task> StopAsync);

    /// <summary>
    /// Starts a throwaway server from the local binaries: initdb in a temp folder, run as the
    /// <c>postgres</c> user when the process is root, on 127.0.0.1 and a free port. The tests run
    /// with <paramref name="fsync"/> off; the crash-recovery and load drivers in bench/ keep it on.
    /// </summary>
    public static async Task<Throwaway> StartThrowawayAsync(bool fsync, int maxConnections = 200)
    {
        var bin = FindBinDir() ?? throw new InvalidOperationException(UnavailableReason());
        SweepStale();
        var root = Path.Combine("/tmp", "panelround-pg-" + Guid.NewGuid().ToString("N")[..12]);
        var data = Path.Combine(root, "data");
        Directory.CreateDirectory(root);
        var asRoot = Environment.UserName == "root";
        if (asRoot)
        {
            await RunAsync("chown", $"postgres:postgres {root}");
        }
        var port = FreePort();
        await RunPgAsync(asRoot, Path.Combine(bin, "initdb"), $"-D {data} -U postgres --auth=trust -E UTF8 --locale=C.UTF-8");
        var durability = fsync ? "-c fsync=on -c synchronous_commit=on" : "-c fsync=off";
        await RunPgAsync(asRoot, Path.Combine(bin, "pg_ctl"),
            $"-D {data} -l {Path.Combine(root, "server.log")} -w -o \"-c listen_addresses=127.0.0.1 -p {port} -k {root} {durability} -c max_connections={maxConnections}\" start");
        async Task StopAsync()
        {
            try
            {
                await RunPgAsync(asRoot, Path.Combine(bin, "pg_ctl"), $"-D {data} -m immediate stop");
                Directory.Delete(root, recursive: true);
            }
            catch (InvalidOperationException)
            {
                // The server is gone already; nothing to clean.
            }
            catch (IOException)
            {
            }
        }
        return new Throwaway($"Host=127.0.0.1;Port={port};Username=postgres;Database=postgres;Include Error Detail=true", StopAsync);
    }

    /// <summary>
    /// Deletes the folders of earlier throwaway servers that no longer run (a test host killed before its exit
    /// handler stopped the server leaves its folder behind; hundreds of them fill the disk). A folder is stale when
    /// its server's process (postmaster.pid) is gone and it is more than ten minutes old (one being set up is younger).
    /// </summary>
    private static void SweepStale()
    {
        foreach (var dir in Directory.EnumerateDirectories("/tmp", "panelround-pg-*"))
        {
            try
            {
                var pidFile = Path.Combine(dir, "data", "postmaster.pid");
                var running = File.Exists(pidFile)
                    && int.TryParse(File.ReadLines(pidFile).FirstOrDefault(), out var pid)
                    && Directory.Exists($"/proc/{pid}");
                if (!running && Directory.GetCreationTimeUtc(dir) < DateTime.UtcNow.AddMinutes(-10))
                {
                    Directory.Delete(dir, recursive: true);
                }
            }
            catch (IOException)
            {
                // Another process is using or deleting it: leave it.
            }
            catch (UnauthorizedAccessException)
            {
            }
        }
    }

    private static string? FindBinDir()
    {
        var explicitDir = Environment.GetEnvironmentVariable("PANELROUND_PG_BIN");
        if (!string.IsNullOrWhiteSpace(explicitDir) && File.Exists(Path.Combine(explicitDir, "initdb")))
        {
            return explicitDir;
        }
        if (Directory.Exists("/usr/lib/postgresql"))
        {
            var best = Directory.GetDirectories("/usr/lib/postgresql")
                .Select(d => Path.Combine(d, "bin"))
                .Where(d => File.Exists(Path.Combine(d, "initdb")) && File.Exists(Path.Combine(d, "pg_ctl")))
                .OrderByDescending(d => int.TryParse(Path.GetFileName(Path.GetDirectoryName(d)), out var v) ? v : 0)
                .FirstOrDefault();
            if (best is not null)
            {
                return best;
            }
        }
        var onPath = (Environment.GetEnvironmentVariable("PATH") ?? "").Split(':')
            .FirstOrDefault(d => File.Exists(Path.Combine(d, "initdb")) && File.Exists(Path.Combine(d, "pg_ctl")));
        return onPath;
    }

    private static int FreePort()
    {
        using var l = new TcpListener(IPAddress.Loopback, 0);
        l.Start();
        return ((IPEndPoint)l.LocalEndpoint).Port;
    }

    private static Task RunPgAsync(bool asRoot, string exe, string args) =>
        asRoot ? RunAsync("runuser", $"-u postgres -- {exe} {args}") : RunAsync(exe, args);

    private static async Task RunAsync(string exe, string args)
    {
        var psi = new ProcessStartInfo(exe, args) { RedirectStandardOutput = true, RedirectStandardError = true, WorkingDirectory = "/tmp" };
        using var p = Process.Start(psi) ?? throw new InvalidOperationException($"Could not start {exe}.");
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        await p.WaitForExitAsync();
        if (p.ExitCode != 0)
        {
            throw new InvalidOperationException($"{exe} {args} exited {p.ExitCode}: {await stderr} {await stdout}");
        }
    }
}
