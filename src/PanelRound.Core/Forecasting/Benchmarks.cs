using System.Collections.ObjectModel;

namespace PanelRound.Core.Forecasting;

/// <summary>Settings of the benchmark forecasts. Immutable; validated when set.</summary>
public sealed record BenchmarkOptions
{
    /// <summary>The defaults: k = 3, not seasonal, the default smoothing bounds.</summary>
    public static BenchmarkOptions Default { get; } = new();

    /// <summary>k of the mean of the last k observations, 1 to 40; default 3.</summary>
    public int MeanWindow { get; init => field = Preconditions.CheckInRange(value, 1, 40, nameof(MeanWindow)); } = 3;

    /// <summary>The seasonal period m: 4 for a quarterly series (adds the seasonal naive), 1 otherwise.</summary>
    public int SeasonalPeriod { get; init => field = Preconditions.CheckInRange(value, 1, 12, nameof(SeasonalPeriod)); } = 1;

    /// <summary>The bounds of the estimated smoothing parameters.</summary>
    public SmoothingBounds Bounds { get; init => field = Preconditions.CheckNotNull(value, nameof(Bounds)); } = SmoothingBounds.Default;
}

/// <summary>
/// The benchmark forecasts of a reference series: naive, drift, mean of the last k, simple exponential
/// smoothing, Holt, damped trend, and seasonal naive for quarterly series, each with 80% intervals.
/// </summary>
/// <remarks>
/// <para>Source: R. J. Hyndman and G. Athanasopoulos, <i>Forecasting: Principles and Practice</i>, 3rd ed.,
/// OTexts, 2021 (FPP3). Point forecasts: §5.2 (naive ŷ = y_T; drift ŷ = y_T + h(y_T − y_1)/(T − 1);
/// seasonal naive ŷ = y_{T+h−m(k+1)}, k = ⌊(h − 1)/m⌋) and §8.1–8.2 (see <see cref="ExponentialSmoothing"/>).</para>
/// <para>Intervals: 80%, ŷ ± z·σ̂_h with z = Φ⁻¹(0.9) = 1.28155… (FPP3 Table 5.1 rounds it to 1.28),
/// normal forecast errors assumed. σ̂ = √(Σe_t² / (N − K)) over the N in-sample one-step residuals
/// with K estimated parameters (FPP3 §5.5). σ̂_h per FPP3 Table 5.2: naive σ̂√h (K = 0); drift
/// σ̂√(h(1 + h/(T − 1))) (K = 1); seasonal naive σ̂√(k + 1) (K = 0). Mean of the last k: the average
/// method's σ̂√(1 + 1/T) with T = k; since its residuals are the one-step errors of the moving mean,
/// whose variance is already σ²(1 + 1/k), σ̂_h is their standard deviation for every h
/// (implementation note: the average method applied to a moving window, common practice).
/// Exponential smoothing: σ̂√v_h from FPP3 §8.7.</para>
/// <para>Shortest series (implementation note: each method needs at least two residual degrees of freedom
/// beyond its parameters, one for the drift): naive 2, drift 3, mean of k: k + 2, simple exponential smoothing 4,
/// Holt 6, damped 7, seasonal naive m + 2. A shorter series gives
/// <see cref="BenchmarkProblem.TooFewObservations"/>, not an exception.</para>
/// </remarks>
public static class Benchmarks
{
    /// <summary>z = Φ⁻¹(0.9), the multiplier of an 80% interval (FPP3 Table 5.1: 1.28).</summary>
    public const double Z80 = 1.2815515655446004;

    /// <summary>The fewest observations <paramref name="method"/> needs; see the type's remarks.</summary>
    public static int MinimumLength(BenchmarkMethod method, BenchmarkOptions? options = null)
    {
        options ??= BenchmarkOptions.Default;
        return method switch
        {
            BenchmarkMethod.Naive => 2,
            BenchmarkMethod.Drift => 3,
            BenchmarkMethod.MeanOfLastK => options.MeanWindow + 2,
            BenchmarkMethod.SimpleExponentialSmoothing => 4,
            BenchmarkMethod.Holt => 6,
            BenchmarkMethod.DampedTrend => 7,
            BenchmarkMethod.SeasonalNaive => Math.Max(options.SeasonalPeriod, 2) + 2,
            _ => throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown benchmark method."),
        };
    }

    /// <summary>Every method that applies (seasonal naive only when the seasonal period is above 1), in <see cref="BenchmarkMethods.All"/> order.</summary>
    /// <param name="series">The reference series, oldest first, finite values, equally spaced.</param>
    /// <param name="horizon">The last horizon wanted, 1 to 400.</param>
    /// <param name="options">k, the seasonal period and the smoothing bounds.</param>
    public static IReadOnlyList<BenchmarkResult> FitAll(IReadOnlyList<double> series, int horizon, BenchmarkOptions? options = null)
    {
        options ??= BenchmarkOptions.Default;
        return BenchmarkMethods.All
            .Where(m => m != BenchmarkMethod.SeasonalNaive || options.SeasonalPeriod > 1)
            .Select(m => Fit(m, series, horizon, options))
            .ToList();
    }

    /// <summary>One method; see the type's remarks.</summary>
    public static BenchmarkResult Fit(BenchmarkMethod method, IReadOnlyList<double> series, int horizon, BenchmarkOptions? options = null)
    {
        Preconditions.CheckAllFinite(series);
        Preconditions.CheckInRange(horizon, 1, 400);
        options ??= BenchmarkOptions.Default;
        var needed = MinimumLength(method, options);
        if (method == BenchmarkMethod.SeasonalNaive && options.SeasonalPeriod < 2)
        {
            return new BenchmarkResult(method, null, BenchmarkProblem.NotApplicable, needed);
        }

        if (series.Count < needed)
        {
            return new BenchmarkResult(method, null, BenchmarkProblem.TooFewObservations, needed);
        }

        var fit = method switch
        {
            BenchmarkMethod.Naive => Naive(series, horizon),
            BenchmarkMethod.Drift => Drift(series, horizon),
            BenchmarkMethod.MeanOfLastK => MeanOfLast(series, horizon, options.MeanWindow),
            BenchmarkMethod.SeasonalNaive => SeasonalNaive(series, horizon, options.SeasonalPeriod),
            BenchmarkMethod.SimpleExponentialSmoothing => Smoothing(method, series, horizon, TrendKind.None, options.Bounds),
            BenchmarkMethod.Holt => Smoothing(method, series, horizon, TrendKind.Linear, options.Bounds),
            _ => Smoothing(method, series, horizon, TrendKind.Damped, options.Bounds),
        };
        return new BenchmarkResult(method, fit, BenchmarkProblem.None, needed);
    }

    /// <summary>
    /// An exponential smoothing benchmark with given parameters (no estimation): the path, intervals
    /// and in-sample errors that <see cref="Fit"/> reports for the estimated ones.
    /// </summary>
    public static BenchmarkFit WithParameters(BenchmarkMethod method, IReadOnlyList<double> series, int horizon, SmoothingParameters parameters)
    {
        var trend = TrendOf(method);
        Preconditions.CheckAllFinite(series);
        Preconditions.CheckInRange(horizon, 1, 400);
        var p = ExponentialSmoothing.Normalise(trend, parameters);
        var run = ExponentialSmoothing.Run(series, trend, p);
        var points = ExponentialSmoothing.PointForecasts(run, trend, p, horizon);
        var sigma = Sigma(run.Sse, series.Count, ExponentialSmoothing.ParameterCount(trend));
        var steps = new List<ForecastStep>(horizon);
        for (var h = 1; h <= horizon; h++)
        {
            steps.Add(Step(h, points[h - 1], sigma * Math.Sqrt(ExponentialSmoothing.RelativeForecastVariance(trend, p, h))));
        }

        var parameterValues = new Dictionary<string, double> { ["alpha"] = p.Alpha, ["level0"] = p.Level0 };
        if (trend != TrendKind.None)
        {
            parameterValues["beta"] = p.BetaStar;
            parameterValues["trend0"] = p.Trend0;
        }

        if (trend == TrendKind.Damped)
        {
            parameterValues["phi"] = p.Phi;
        }

        return Result(method, steps, parameterValues, run.Errors, sigma);
    }

    private static TrendKind TrendOf(BenchmarkMethod method) => method switch
    {
        BenchmarkMethod.SimpleExponentialSmoothing => TrendKind.None,
        BenchmarkMethod.Holt => TrendKind.Linear,
        BenchmarkMethod.DampedTrend => TrendKind.Damped,
        _ => throw new ArgumentException($"{method} is not an exponential smoothing method.", nameof(method)),
    };

    private static BenchmarkFit Smoothing(BenchmarkMethod method, IReadOnlyList<double> series, int horizon, TrendKind trend, SmoothingBounds bounds) =>
        WithParameters(method, series, horizon, ExponentialSmoothing.Fit(series, trend, bounds));

    private static BenchmarkFit Naive(IReadOnlyList<double> y, int horizon)
    {
        var residuals = Differences(y, 1, 0);
        var sigma = Sigma(SumOfSquares(residuals), residuals.Length, 0);
        var steps = Enumerable.Range(1, horizon).Select(h => Step(h, y[^1], sigma * Math.Sqrt(h))).ToList();
        return Result(BenchmarkMethod.Naive, steps, new Dictionary<string, double>(), residuals, sigma);
    }

    private static BenchmarkFit Drift(IReadOnlyList<double> y, int horizon)
    {
        var t = y.Count;
        var drift = (y[^1] - y[0]) / (t - 1);
        var residuals = Differences(y, 1, drift);
        var sigma = Sigma(SumOfSquares(residuals), residuals.Length, 1);
        var steps = Enumerable.Range(1, horizon)
            .Select(h => Step(h, y[^1] + (h * drift), sigma * Math.Sqrt(h * (1 + (h / (double)(t - 1))))))
            .ToList();
        return Result(BenchmarkMethod.Drift, steps, new Dictionary<string, double> { ["drift"] = drift }, residuals, sigma);
    }

    private static BenchmarkFit MeanOfLast(IReadOnlyList<double> y, int horizon, int k)
    {
        var residuals = new double[y.Count - k];
        for (var t = k; t < y.Count; t++)
        {
            residuals[t - k] = y[t] - Mean(y, t - k, k);
        }

        var sigma = Sigma(SumOfSquares(residuals), residuals.Length, 0);
        var point = Mean(y, y.Count - k, k);
        var steps = Enumerable.Range(1, horizon).Select(h => Step(h, point, sigma)).ToList();
        return Result(BenchmarkMethod.MeanOfLastK, steps, new Dictionary<string, double> { ["k"] = k }, residuals, sigma);
    }

    private static BenchmarkFit SeasonalNaive(IReadOnlyList<double> y, int horizon, int m)
    {
        var residuals = Differences(y, m, 0);
        var sigma = Sigma(SumOfSquares(residuals), residuals.Length, 0);
        var t = y.Count;
        var steps = Enumerable.Range(1, horizon).Select(h =>
        {
            var k = (h - 1) / m;
            return Step(h, y[t + h - (m * (k + 1)) - 1], sigma * Math.Sqrt(k + 1));
        }).ToList();
        return Result(BenchmarkMethod.SeasonalNaive, steps, new Dictionary<string, double> { ["m"] = m }, residuals, sigma);
    }

    private static ForecastStep Step(int h, double point, double sd) => new(h, point, point - (Z80 * sd), point + (Z80 * sd), sd);

    private static BenchmarkFit Result(
        BenchmarkMethod method, IReadOnlyList<ForecastStep> steps, Dictionary<string, double> parameters, IReadOnlyList<double> residuals, double sigma)
    {
        var sse = SumOfSquares(residuals);
        var mae = residuals.Count == 0 ? double.NaN : residuals.Sum(Math.Abs) / residuals.Count;
        return new BenchmarkFit(method, steps, new ReadOnlyDictionary<string, double>(parameters), residuals.Count, sse, sigma, mae,
            Math.Sqrt(sse / residuals.Count));
    }

    /// <summary>e_t = y_t − y_{t−lag} − shift for t = lag+1..T.</summary>
    private static double[] Differences(IReadOnlyList<double> y, int lag, double shift)
    {
        var result = new double[y.Count - lag];
        for (var t = lag; t < y.Count; t++)
        {
            result[t - lag] = y[t] - y[t - lag] - shift;
        }

        return result;
    }

    private static double Mean(IReadOnlyList<double> y, int from, int count)
    {
        var sum = 0.0;
        for (var i = from; i < from + count; i++)
        {
            sum += y[i];
        }

        return sum / count;
    }

    private static double SumOfSquares(IReadOnlyList<double> values)
    {
        var sum = 0.0;
        foreach (var v in values)
        {
            sum += v * v;
        }

        return sum;
    }

    private static double Sigma(double sse, int residuals, int parameters) => Math.Sqrt(sse / (residuals - parameters));
}
