using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace PanelRound.Core.Tests.Forecasting;

/// <summary>The committed reference data of TestData/Forecasting (see its README and generate.py).</summary>
internal static class ForecastingReference
{
    public static ReferenceFile Load()
    {
        using var stream = Open("TestData/Forecasting/exponential-smoothing-reference.json");
        return JsonSerializer.Deserialize<ReferenceFile>(stream)!;
    }

    /// <summary>The values of a committed series CSV (<c>period,value</c>), oldest first.</summary>
    public static double[] Series(string key)
    {
        using var stream = Open($"TestData/Forecasting/{key}.csv");
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd().Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1)
            .Select(line => double.Parse(line.Split(',')[1], CultureInfo.InvariantCulture)).ToArray();
    }

    private static Stream Open(string name) =>
        typeof(ForecastingReference).Assembly.GetManifestResourceStream(name) ?? throw new InvalidOperationException($"Missing embedded test data {name}.");
}

internal sealed record ReferenceFile(
    [property: JsonPropertyName("statsmodels")] string Statsmodels,
    [property: JsonPropertyName("horizon")] int Horizon,
    [property: JsonPropertyName("series")] IReadOnlyList<ReferenceSeries> Series);

internal sealed record ReferenceSeries(
    [property: JsonPropertyName("key")] string Key,
    [property: JsonPropertyName("n")] int N,
    [property: JsonPropertyName("models")] IReadOnlyDictionary<string, ReferenceModel> Models);

internal sealed record ReferenceModel(
    [property: JsonPropertyName("alpha")] double Alpha,
    [property: JsonPropertyName("beta_star")] double? BetaStar,
    [property: JsonPropertyName("phi")] double? Phi,
    [property: JsonPropertyName("l0")] double L0,
    [property: JsonPropertyName("b0")] double? B0,
    [property: JsonPropertyName("sse")] double Sse,
    [property: JsonPropertyName("fitted")] IReadOnlyList<double> Fitted,
    [property: JsonPropertyName("forecast")] IReadOnlyList<double> Forecast,
    [property: JsonPropertyName("ets_scale_mean_squared_residual")] double EtsScale,
    [property: JsonPropertyName("ets_relative_forecast_variance")] IReadOnlyList<double> EtsRelativeVariance,
    [property: JsonPropertyName("ets_p10")] IReadOnlyList<double> EtsP10,
    [property: JsonPropertyName("ets_p90")] IReadOnlyList<double> EtsP90);
