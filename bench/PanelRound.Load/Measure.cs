using System.Diagnostics;

namespace PanelRound.Load;

/// <summary>One timed run: operations per second, latency percentiles and failures, and where the machine's CPU went.</summary>
internal sealed record Run(int Operations, TimeSpan Elapsed, double P50Ms, double P95Ms, double P99Ms, int Errors, string Statuses, CpuShare? Cpu = null)
{
    public double PerSecond(int unitsPerOperation) => Operations * unitsPerOperation / Elapsed.TotalSeconds;
}

/// <summary>
/// CPU milliseconds per operation during a run (Linux /proc, 100 ticks a second): the app's process
/// (when it runs as a child of this driver), this driver, and the rest of the machine (the database
/// server, mostly); and the machine's busy share.
/// </summary>
internal sealed record CpuShare(double AppMs, double DriverMs, double RestMs, double Busy)
{
    private static long[] Machine()
    {
        var cpu = File.ReadLines("/proc/stat").First().Split(' ', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(long.Parse).ToArray();
        // user nice system idle iowait irq softirq steal: busy is all but idle and iowait.
        return [cpu.Take(8).Sum() - cpu[3] - cpu[4], cpu.Take(8).Sum()];
    }

    private static long Process(int? pid)
    {
        if (pid is null || !File.Exists($"/proc/{pid}/stat"))
        {
            return 0;
        }
        var text = File.ReadAllText($"/proc/{pid}/stat");
        var fields = text[(text.LastIndexOf(')') + 2)..].Split(' ');
        return long.Parse(fields[11]) + long.Parse(fields[12]);
    }

    public static Func<int, CpuShare?> Start(int? appPid)
    {
        if (!OperatingSystem.IsLinux())
        {
            return _ => null;
        }
        var machine = Machine();
        var app = Process(appPid);
        var driver = Process(Environment.ProcessId);
        return operations =>
        {
            var m = Machine();
            var a = Process(appPid) - app;
            var d = Process(Environment.ProcessId) - driver;
            var busy = m[0] - machine[0];
            // 100 ticks a second: a tick is 10 ms.
            return new CpuShare(a * 10.0 / operations, d * 10.0 / operations, Math.Max(0, busy - a - d) * 10.0 / operations,
                (double)busy / Math.Max(1, m[1] - machine[1]));
        };
    }
}

internal static class Measure
{
    /// <summary>
    /// Runs <paramref name="count"/> operations from <paramref name="clients"/> concurrent workers, each
    /// taking the next index; an operation returns its status text ("200", "409", "error: ...").
    /// </summary>
    public static async Task<Run> RunAsync(int count, int clients, Func<int, Task<string>> operation, int? appPid = null)
    {
        var cpu = CpuShare.Start(appPid);
        var latencies = new double[count];
        var statuses = new string[count];
        var next = -1;
        var clock = Stopwatch.StartNew();
        await Task.WhenAll(Enumerable.Range(0, clients).Select(_ => Task.Run(async () =>
        {
            int i;
            while ((i = Interlocked.Increment(ref next)) < count)
            {
                var start = Stopwatch.GetTimestamp();
                try
                {
                    statuses[i] = await operation(i);
                }
                catch (Exception e) when (e is HttpRequestException or TaskCanceledException or Npgsql.NpgsqlException or InvalidOperationException)
                {
                    statuses[i] = "error: " + e.GetType().Name;
                }
                latencies[i] = Stopwatch.GetElapsedTime(start).TotalMilliseconds;
            }
        })));
        clock.Stop();
        Array.Sort(latencies);
        double At(double q) => latencies[Math.Min(count - 1, (int)Math.Ceiling(q * count) - 1)];
        var ok = statuses.Count(s => s is "200" or "201" or "ok");
        var summary = string.Join(" ", statuses.GroupBy(s => s).OrderBy(g => g.Key, StringComparer.Ordinal).Select(g => $"{g.Key}:{g.Count()}"));
        return new Run(count, clock.Elapsed, At(0.5), At(0.95), At(0.99), count - ok, summary, cpu(count));
    }

    public static double Median(IEnumerable<double> values)
    {
        var v = values.Order().ToArray();
        return v.Length % 2 == 1 ? v[v.Length / 2] : (v[(v.Length / 2) - 1] + v[v.Length / 2]) / 2;
    }
}
