using System.Diagnostics;
using System.Net;
using System.Net.Sockets;

namespace PanelRound.Load;

/// <summary>
/// The web app as a separate process (the published or built <c>PanelRound.Web.dll</c>) on PostgreSQL,
/// so that it can be killed with SIGKILL and started again on the same database.
/// </summary>
/// <param name="appDll">The app.</param>
/// <param name="connectionString">Its PostgreSQL connection string.</param>
/// <param name="environment">Environment variables that replace the defaults below (e.g. another provider, the demo on).</param>
internal sealed class AppProcess(string appDll, string connectionString, IReadOnlyDictionary<string, string>? environment = null) : IAsyncDisposable
{
    private Process? _process;

    public int Port { get; } = FreePort();

    public Uri BaseAddress => new($"http://127.0.0.1:{Port}/");

    /// <summary>The running app's process id (for its memory in /proc), or null when it is not running.</summary>
    public int? ProcessId => _process?.Id;

    private ProcessStartInfo StartInfo(params string[] args)
    {
        var psi = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, WorkingDirectory = Path.GetDirectoryName(appDll)! };
        psi.ArgumentList.Add(appDll);
        foreach (var a in args)
        {
            psi.ArgumentList.Add(a);
        }
        psi.Environment["ASPNETCORE_ENVIRONMENT"] = "Production";
        psi.Environment["ASPNETCORE_URLS"] = BaseAddress.ToString();
        psi.Environment["Database__Provider"] = "Postgres";
        psi.Environment["ConnectionStrings__Postgres"] = connectionString;
        psi.Environment["RateLimits__Enabled"] = "false";
        psi.Environment["Logging__LogLevel__Default"] = "Warning";
        foreach (var (name, value) in environment ?? new Dictionary<string, string>())
        {
            psi.Environment[name] = value;
        }
        return psi;
    }

    /// <summary>Runs one of the app's commands (e.g. <c>create-api-key</c>) to its end and returns its output.</summary>
    public async Task<string> RunCommandAsync(params string[] args)
    {
        using var p = Process.Start(StartInfo(args)) ?? throw new InvalidOperationException("dotnet did not start.");
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        await p.WaitForExitAsync();
        return p.ExitCode == 0 ? await stdout : throw new InvalidOperationException($"{string.Join(' ', args)} exited {p.ExitCode}: {await stderr}");
    }

    /// <summary>Starts the app and waits until <c>/health/ready</c> answers 200; returns the time that took.</summary>
    public async Task<TimeSpan> StartAsync()
    {
        var clock = Stopwatch.StartNew();
        _process = Process.Start(StartInfo()) ?? throw new InvalidOperationException("dotnet did not start.");
        _process.OutputDataReceived += (_, _) => { };
        _process.ErrorDataReceived += (_, e) =>
        {
            if (e.Data is { Length: > 0 })
            {
                Console.Error.WriteLine("  app: " + e.Data);
            }
        };
        _process.BeginOutputReadLine();
        _process.BeginErrorReadLine();
        using var http = new HttpClient { BaseAddress = BaseAddress, Timeout = TimeSpan.FromSeconds(2) };
        while (clock.Elapsed < TimeSpan.FromMinutes(2))
        {
            if (_process.HasExited)
            {
                throw new InvalidOperationException($"The app exited with {_process.ExitCode} while starting.");
            }
            try
            {
                using var r = await http.GetAsync(new Uri("health/ready", UriKind.Relative));
                if (r.StatusCode == HttpStatusCode.OK)
                {
                    return clock.Elapsed;
                }
            }
            catch (HttpRequestException)
            {
            }
            catch (TaskCanceledException)
            {
            }
            await Task.Delay(50);
        }
        throw new TimeoutException("The app did not become ready within 2 minutes.");
    }

    /// <summary>SIGKILL: no shutdown, no flush, no goodbye (what a power cut or the OOM killer does).</summary>
    public async Task KillAsync()
    {
        if (_process is { HasExited: false } p)
        {
            p.Kill(entireProcessTree: true);
            await p.WaitForExitAsync();
        }
        _process?.Dispose();
        _process = null;
    }

    public ValueTask DisposeAsync() => new(KillAsync());

    private static int FreePort()
    {
        using var l = new TcpListener(IPAddress.Loopback, 0);
        l.Start();
        return ((IPEndPoint)l.LocalEndpoint).Port;
    }
}
