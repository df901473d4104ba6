namespace PanelRound.Core.Forecasting;

/// <summary>One step of a benchmark path: the point forecast h periods after the reference series ends, with its 80% interval.</summary>
/// <param name="Horizon">h, 1 or more periods after the last reference observation.</param>
/// <param name="Point">The point forecast ŷ_{T+h|T}.</param>
/// <param name="P10">The lower end of the 80% prediction interval, ŷ − z·σ̂_h with z = Φ⁻¹(0.9).</param>
/// <param name="P90">The upper end, ŷ + z·σ̂_h.</param>
/// <param name="StandardDeviation">σ̂_h, the estimated standard deviation of the h-step forecast distribution.</param>
public sealed record ForecastStep(int Horizon, double Point, double P10, double P90, double StandardDeviation);

/// <summary>Why a benchmark could not be fitted.</summary>
public enum BenchmarkProblem
{
    /// <summary>The benchmark is available.</summary>
    None,

    /// <summary>The reference series is shorter than the method needs (see <see cref="Benchmarks.MinimumLength"/>).</summary>
    TooFewObservations,

    /// <summary>The method does not apply to this series (seasonal naive on a yearly series).</summary>
    NotApplicable,
}

/// <summary>A fitted benchmark: its path with intervals, its parameters and its in-sample one-step errors.</summary>
/// <param name="Method">The method.</param>
/// <param name="Steps">The path, horizon 1 to the requested horizon.</param>
/// <param name="Parameters">The fitted (or fixed) parameters by name: <c>drift</c>, <c>k</c>, <c>alpha</c>, <c>beta</c> (β* of FPP3 §8.2), <c>phi</c>, <c>level0</c>, <c>trend0</c>.</param>
/// <param name="Residuals">The number of in-sample one-step errors the figures below rest on.</param>
/// <param name="Sse">The sum of squared in-sample one-step errors.</param>
/// <param name="Sigma">σ̂: √(SSE / (residuals − estimated parameters)), FPP3 §5.5.</param>
/// <param name="InSampleMae">The mean absolute in-sample one-step error.</param>
/// <param name="InSampleRmse">The root mean squared in-sample one-step error, √(SSE / residuals).</param>
public sealed record BenchmarkFit(
    BenchmarkMethod Method,
    IReadOnlyList<ForecastStep> Steps,
    IReadOnlyDictionary<string, double> Parameters,
    int Residuals,
    double Sse,
    double Sigma,
    double InSampleMae,
    double InSampleRmse);

/// <summary>A benchmark, or the reason there is none.</summary>
/// <param name="Method">The method.</param>
/// <param name="Fit">The fit; null when unavailable.</param>
/// <param name="Problem">Why it is unavailable; <see cref="BenchmarkProblem.None"/> when available.</param>
/// <param name="Needed">The fewest observations the method needs with its settings.</param>
public sealed record BenchmarkResult(BenchmarkMethod Method, BenchmarkFit? Fit, BenchmarkProblem Problem, int Needed)
{
    /// <summary>True when <see cref="Fit"/> is set.</summary>
    public bool IsAvailable => Fit is not null;

    /// <summary>A short English explanation when unavailable; null otherwise.</summary>
    public string? Reason => Problem switch
    {
        BenchmarkProblem.TooFewObservations => $"The reference series is too short: this method needs at least {Needed} observations.",
        BenchmarkProblem.NotApplicable => "The seasonal naive forecast applies to quarterly series only.",
        _ => null,
    };
}
