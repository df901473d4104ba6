using System.Diagnostics.CodeAnalysis;

namespace PanelRound.Core.Forecasting;

/// <summary>A simple statistical forecast from a reference series, scored beside the experts.</summary>
/// <remarks>
/// Definitions follow R. J. Hyndman and G. Athanasopoulos, <i>Forecasting: Principles and Practice</i>,
/// 3rd ed., OTexts, 2021 (FPP3): the simple methods of section 5.2 and the exponential smoothing
/// methods of sections 8.1 and 8.2.
/// </remarks>
public enum BenchmarkMethod
{
    /// <summary>No change: every forecast is the last observation (FPP3 §5.2, naïve method).</summary>
    Naive,

    /// <summary>Random walk with drift: the last observation plus h times the average one-step change (FPP3 §5.2, drift method).</summary>
    Drift,

    /// <summary>The mean of the last k observations, k a setting (default 3): the average method of FPP3 §5.2 on a moving window.</summary>
    MeanOfLastK,

    /// <summary>Simple exponential smoothing (FPP3 §8.1).</summary>
    SimpleExponentialSmoothing,

    /// <summary>Holt's linear trend method (FPP3 §8.2).</summary>
    Holt,

    /// <summary>Holt's method with a damped trend (FPP3 §8.2, damped trend methods).</summary>
    DampedTrend,

    /// <summary>Seasonal naïve for quarterly series: the last observation of the same quarter (FPP3 §5.2).</summary>
    SeasonalNaive,
}

/// <summary>The text keys of <see cref="BenchmarkMethod"/> (the API's and exports' <c>benchmark:&lt;key&gt;</c>) and their names in words.</summary>
public static class BenchmarkMethods
{
    /// <summary>Every method, in the order pages and exports list them.</summary>
    public static IReadOnlyList<BenchmarkMethod> All { get; } =
    [
        BenchmarkMethod.Naive, BenchmarkMethod.Drift, BenchmarkMethod.MeanOfLastK, BenchmarkMethod.SimpleExponentialSmoothing,
        BenchmarkMethod.Holt, BenchmarkMethod.DampedTrend, BenchmarkMethod.SeasonalNaive,
    ];

    /// <summary>The method's key: <c>naive</c>, <c>drift</c>, <c>mean</c>, <c>ses</c>, <c>holt</c>, <c>damped</c> or <c>seasonal-naive</c>.</summary>
    public static string Key(BenchmarkMethod method) => method switch
    {
        BenchmarkMethod.Naive => "naive",
        BenchmarkMethod.Drift => "drift",
        BenchmarkMethod.MeanOfLastK => "mean",
        BenchmarkMethod.SimpleExponentialSmoothing => "ses",
        BenchmarkMethod.Holt => "holt",
        BenchmarkMethod.DampedTrend => "damped",
        BenchmarkMethod.SeasonalNaive => "seasonal-naive",
        _ => throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown benchmark method."),
    };

    /// <summary>Parses a key (case-insensitive); false for anything else.</summary>
    public static bool TryParse(string? key, [NotNullWhen(true)] out BenchmarkMethod? method)
    {
        method = All.FirstOrDefault(m => string.Equals(Key(m), key?.Trim(), StringComparison.OrdinalIgnoreCase));
        if (method is { } found && string.Equals(Key(found), key?.Trim(), StringComparison.OrdinalIgnoreCase))
        {
            return true;
        }

        method = null;
        return false;
    }

    /// <summary>The method in words, for pages and reports.</summary>
    public static string Describe(BenchmarkMethod method, int k = 3) => method switch
    {
        BenchmarkMethod.Naive => "No change (naive)",
        BenchmarkMethod.Drift => "Random walk with drift",
        BenchmarkMethod.MeanOfLastK => $"Mean of the last {k} observations",
        BenchmarkMethod.SimpleExponentialSmoothing => "Simple exponential smoothing",
        BenchmarkMethod.Holt => "Holt's linear trend",
        BenchmarkMethod.DampedTrend => "Damped trend",
        BenchmarkMethod.SeasonalNaive => "Seasonal naive (quarterly)",
        _ => method.ToString(),
    };
}
