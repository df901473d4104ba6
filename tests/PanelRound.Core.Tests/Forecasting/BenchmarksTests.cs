using MathNet.Numerics.Distributions;
using PanelRound.Core.Forecasting;

namespace PanelRound.Core.Tests.Forecasting;

/// <summary>
/// The simple benchmark methods against hand computation and the closed forms of R. J. Hyndman and
/// G. Athanasopoulos, Forecasting: Principles and Practice, 3rd ed., OTexts, 2021 (FPP3).
/// </summary>
public class BenchmarksTests
{
    private static readonly double[] Series = [100, 104, 103, 107, 110];

    [Fact]
    public void Z80_IsTheNormalQuantile_AndFpp3Table51Multiplier()
    {
        // FPP3 Table 5.1: the multiplier of an 80% interval is 1.28 (two decimals); MathNet gives the quantile itself.
        Assert.Equal(Benchmarks.Z80, Normal.InvCDF(0, 1, 0.9), 12);
        Assert.Equal(1.28, Math.Round(Benchmarks.Z80, 2));
    }

    [Fact]
    public void Naive_PointAndInterval_MatchFpp3Table52()
    {
        // FPP3 §5.2: ŷ_{T+h|T} = y_T. Residuals y_t − y_{t−1} = 4, −1, 4, 3; K = 0, so σ̂ = √(42 / 4) (§5.5).
        // FPP3 Table 5.2, naive: σ̂_h = σ̂·√h.
        var fit = Benchmarks.Fit(BenchmarkMethod.Naive, Series, 4).Fit!;
        var sigma = Math.Sqrt(42.0 / 4);
        Assert.Equal(sigma, fit.Sigma, 12);
        Assert.All(fit.Steps, s => Assert.Equal(110, s.Point, 12));
        Assert.Equal(sigma * 2, fit.Steps[3].StandardDeviation, 12);
        Assert.Equal(110 - (Benchmarks.Z80 * sigma * 2), fit.Steps[3].P10, 10);
        Assert.Equal(110 + (Benchmarks.Z80 * sigma * Math.Sqrt(3)), fit.Steps[2].P90, 10);
        Assert.Equal(4, fit.Residuals);
        Assert.Equal(3, fit.InSampleMae, 12);
    }

    [Fact]
    public void Drift_PointAndInterval_MatchClosedFormAndFpp3Table52()
    {
        // FPP3 §5.2: ŷ_{T+h|T} = y_T + h·(y_T − y_1)/(T − 1) = 110 + 2.5h.
        // Residuals y_t − y_{t−1} − 2.5 = 1.5, −3.5, 1.5, 0.5 (SSE 17); K = 1, so σ̂ = √(17 / 3) (§5.5).
        // FPP3 Table 5.2, drift: σ̂_h = σ̂·√(h(1 + h/(T − 1))), T = 5.
        var fit = Benchmarks.Fit(BenchmarkMethod.Drift, Series, 3).Fit!;
        var sigma = Math.Sqrt(17.0 / 3);
        Assert.Equal(2.5, fit.Parameters["drift"], 12);
        Assert.Equal([112.5, 115, 117.5], fit.Steps.Select(s => Math.Round(s.Point, 10)));
        Assert.Equal(sigma, fit.Sigma, 12);
        for (var h = 1; h <= 3; h++)
        {
            var sd = sigma * Math.Sqrt(h * (1 + (h / 4.0)));
            Assert.Equal(sd, fit.Steps[h - 1].StandardDeviation, 12);
            Assert.Equal(fit.Steps[h - 1].Point - (Benchmarks.Z80 * sd), fit.Steps[h - 1].P10, 10);
        }
    }

    [Fact]
    public void Drift_EqualsTheLineThroughFirstAndLastObservation()
    {
        // FPP3 §5.2: the drift forecast extends the line drawn between the first and last observations.
        var y = new double[] { 3, 9, 4, 12, 7, 15 };
        var fit = Benchmarks.Fit(BenchmarkMethod.Drift, y, 6).Fit!;
        for (var h = 1; h <= 6; h++)
        {
            var t = y.Length - 1 + h;
            Assert.Equal(y[0] + (t * (y[^1] - y[0]) / (y.Length - 1)), fit.Steps[h - 1].Point, 10);
        }
    }

    [Fact]
    public void SeasonalNaive_Quarterly_RepeatsTheLastYear_WithFpp3Table52Interval()
    {
        // FPP3 §5.2: ŷ_{T+h|T} = y_{T+h−m(k+1)}, k = ⌊(h − 1)/m⌋; Table 5.2: σ̂_h = σ̂·√(k + 1), m = 4.
        var y = new double[] { 10, 20, 30, 40, 12, 21, 33, 41 };
        var fit = Benchmarks.Fit(BenchmarkMethod.SeasonalNaive, y, 6, new BenchmarkOptions { SeasonalPeriod = 4 }).Fit!;
        Assert.Equal([12, 21, 33, 41, 12, 21], fit.Steps.Select(s => s.Point));
        var sigma = Math.Sqrt((4 + 1 + 9 + 1) / 4.0);
        Assert.Equal(sigma, fit.Steps[3].StandardDeviation, 12);
        Assert.Equal(sigma * Math.Sqrt(2), fit.Steps[4].StandardDeviation, 12);
    }

    [Fact]
    public void MeanOfLastK_IsTheMovingWindowMean_WithItsOneStepErrors()
    {
        // The average method of FPP3 §5.2 on the last k = 3 values: (103 + 107 + 110) / 3.
        // One-step errors of the moving mean: 107 − 307/3, 110 − 314/3.
        var fit = Benchmarks.Fit(BenchmarkMethod.MeanOfLastK, Series, 2).Fit!;
        Assert.Equal(320.0 / 3, fit.Steps[0].Point, 12);
        double e1 = 107 - (307.0 / 3), e2 = 110 - (314.0 / 3);
        Assert.Equal(Math.Sqrt(((e1 * e1) + (e2 * e2)) / 2), fit.Sigma, 12);
        Assert.Equal(fit.Sigma, fit.Steps[1].StandardDeviation, 12);
        Assert.Equal(3, fit.Parameters["k"]);
    }

    [Theory]
    [InlineData(BenchmarkMethod.Naive, 1)]
    [InlineData(BenchmarkMethod.Drift, 2)]
    [InlineData(BenchmarkMethod.MeanOfLastK, 4)]
    [InlineData(BenchmarkMethod.SimpleExponentialSmoothing, 3)]
    [InlineData(BenchmarkMethod.Holt, 5)]
    [InlineData(BenchmarkMethod.DampedTrend, 6)]
    public void Fit_SeriesOneShorterThanTheMinimum_IsAResultWithAReason(BenchmarkMethod method, int length)
    {
        var series = Enumerable.Range(0, length).Select(i => 100.0 + (i * i)).ToArray();
        var result = Benchmarks.Fit(method, series, 3);
        Assert.False(result.IsAvailable);
        Assert.Equal(BenchmarkProblem.TooFewObservations, result.Problem);
        Assert.Contains((length + 1).ToString(System.Globalization.CultureInfo.InvariantCulture), result.Reason, StringComparison.Ordinal);
        Assert.True(Benchmarks.Fit(method, [.. series, 150], 3).IsAvailable);
    }

    [Fact]
    public void FitAll_YearlySeries_LeavesOutSeasonalNaive_QuarterlyAddsIt()
    {
        var y = Enumerable.Range(0, 12).Select(i => 100 + (3.0 * i) + (i % 4)).ToArray();
        Assert.DoesNotContain(Benchmarks.FitAll(y, 4), r => r.Method == BenchmarkMethod.SeasonalNaive);
        var quarterly = Benchmarks.FitAll(y, 4, new BenchmarkOptions { SeasonalPeriod = 4 });
        Assert.Equal(BenchmarkMethods.All, quarterly.Select(r => r.Method));
        Assert.All(quarterly, r => Assert.True(r.IsAvailable));
        Assert.All(quarterly.SelectMany(r => r.Fit!.Steps), s => Assert.True(s.P10 <= s.Point && s.Point <= s.P90));
    }

    [Fact]
    public void Fit_NonFiniteObservation_Throws()
    {
        Assert.Throws<ArgumentException>(() => Benchmarks.Fit(BenchmarkMethod.Naive, [1, double.NaN, 3], 2));
    }

    [Theory]
    [InlineData("naive", BenchmarkMethod.Naive)]
    [InlineData("DAMPED", BenchmarkMethod.DampedTrend)]
    [InlineData(" seasonal-naive ", BenchmarkMethod.SeasonalNaive)]
    public void MethodKeys_RoundTrip(string key, BenchmarkMethod method)
    {
        Assert.True(BenchmarkMethods.TryParse(key, out var parsed));
        Assert.Equal(method, parsed);
        Assert.True(BenchmarkMethods.TryParse(BenchmarkMethods.Key(method), out _));
        Assert.False(BenchmarkMethods.TryParse("arima", out _));
    }
}
