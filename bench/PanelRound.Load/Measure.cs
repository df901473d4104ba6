using System.Diagnostics;

namespace PanelRound.Load;

/// <summary>One timed run: operations per second, latency percentiles and failures.</summary>
internal sealed record Run(int Operations, TimeSpan Elapsed, double P50Ms, double P95Ms, double P99Ms, int Errors, string Statuses)
{
    public double PerSecond(int unitsPerOperation) => Operations * unitsPerOperation / Elapsed.TotalSeconds;
}

internal static class Measure
{
    /// <summary>
    /// Runs <paramref name="count"/> operations from <paramref name="clients"/> concurrent workers, each
    /// taking the next index; an operation returns its status text ("200", "409", "error: ...").
    /// </summary>
    public static async Task<Run> RunAsync(int count, int clients, Func<int, Task<string>> operation)
    {
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
        return new Run(count, clock.Elapsed, At(0.5), At(0.95), At(0.99), count - ok, summary);
    }

    public static double Median(IEnumerable<double> values)
    {
        var v = values.Order().ToArray();
        return v.Length % 2 == 1 ? v[v.Length / 2] : (v[(v.Length / 2) - 1] + v[v.Length / 2]) / 2;
    }
}
