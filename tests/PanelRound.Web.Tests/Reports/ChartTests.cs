using PanelRound.Core.Domain;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Reports;

namespace PanelRound.Web.Tests.Reports;

/// <summary>The chart model: a real time axis (a missing year is a gap), a legend entry for every series, and safe scales.</summary>
public class ChartTests
{
    private static ChartPoint P(int year, double v, double? lo = null, double? hi = null) => new(Period.OfYear(year), v, lo, hi);

    [Fact]
    public void Layout_MissingYear_BreaksTheLineIntoTwoRuns()
    {
        var chart = new ChartModel("Price", "EUR/m²", 0, [new ChartSeries("History", SeriesKind.Line, "#555555", [P(2019, 1), P(2020, 2), P(2022, 4), P(2023, 5)])]);
        var lines = chart.Layout(640, 260).OfType<PolylineShape>().Where(l => l.Points.Count > 2 || l.Colour == "#555555").ToList();
        // Two runs of the series (2019-2020 and 2022-2023) plus the legend's sample line.
        Assert.Equal(3, lines.Count);
        var runs = lines.Where(l => l.Points.Count == 2 && l.Points[0].Y != l.Points[1].Y).ToList();
        Assert.Equal(2, runs.Count);
        // The gap is as wide as two years on the axis, not one step.
        var yearWidth = runs[0].Points[1].X - runs[0].Points[0].X;
        Assert.Equal(2 * yearWidth, runs[1].Points[0].X - runs[0].Points[1].X, 6);
    }

    [Fact]
    public void Layout_EverySeries_HasALegendEntry()
    {
        var chart = new ChartModel("Rent", "EUR", 1,
        [
            new ChartSeries("Observed history", SeriesKind.Line, "#555555", [P(2020, 10), P(2021, 11)]),
            new ChartSeries("Round 1", SeriesKind.Band, "#3182bd", [P(2027, 12, 11, 13)]),
            new ChartSeries("Consensus", SeriesKind.Band, "#d95f02", [P(2027, 12.5, 12, 13)]),
        ]);
        var texts = chart.Layout(640, 260).OfType<TextShape>().Select(t => t.Text).ToList();
        Assert.Contains("Observed history", texts);
        Assert.Contains("Round 1", texts);
        Assert.Contains("Consensus", texts);
        Assert.Contains("<title>Rent</title>", chart.ToSvg(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0.1, 0.10000000000000002)]
    [InlineData(5, 5)]
    [InlineData(0, 0)]
    [InlineData(-1e12, 1e12)]
    public void Layout_FlatOrExtremeValues_FewTicksAndFinite(double a, double b)
    {
        var chart = new ChartModel("Flat", "", 2, [new ChartSeries("Consensus", SeriesKind.Band, "#d95f02", [P(2027, a, a, b), P(2028, b, a, b)])]);
        var shapes = chart.Layout(640, 260);
        var ticks = shapes.OfType<TextShape>().Count(t => t.Anchor == "end");
        Assert.InRange(ticks, 2, 12);
        Assert.All(shapes.OfType<DotShape>(), d => Assert.True(double.IsFinite(d.Y)));
    }

    private static BenchmarkDto Benchmark(string method, string name, double rmse, double value) =>
        new(method, name, true, null, new Dictionary<string, double>(), 9, rmse, rmse, rmse,
            [new BenchmarkPointDto("2027", 1, value, value - 5, value + 5), new BenchmarkPointDto("2028", 2, value + 1, value - 6, value + 8)]);

    [Fact]
    public void ResultsChart_DrawsNoChangeAndTheBestFittingBenchmark_KeepsTheOthersToToggle_AndTheLegendShort()
    {
        var question = new QuestionBenchmarksDto(1, "Rent", "rent", "EUR", 1, "Point", 10, "2017", "2026", false,
        [
            Benchmark("naive", "No change (naive)", 5, 100), Benchmark("drift", "Random walk with drift", 3, 103),
            Benchmark("mean", "Mean of the last 3 observations", 7, 98), Benchmark("ses", "Simple exponential smoothing", 4.5, 100.5),
            Benchmark("holt", "Holt's linear trend", 2.5, 104), Benchmark("damped", "Damped trend", 2.9, 103.5),
        ]);
        var chart = new ChartModel("Rent", "EUR", 1,
        [
            new ChartSeries("Observed history", SeriesKind.Line, "#555555", [P(2025, 95), P(2026, 99)]),
            new ChartSeries("Round 1: median and Q1-Q3", SeriesKind.Band, "#9ecae1", [P(2027, 101, 99, 103), P(2028, 102, 100, 104)]),
            new ChartSeries("Round 2: median and Q1-Q3", SeriesKind.Band, "#3182bd", [P(2027, 101, 100, 102), P(2028, 102, 101, 103)]),
            new ChartSeries("Consensus and Q1-Q3 band", SeriesKind.Band, "#d95f02", [P(2027, 101, 100, 102), P(2028, 102, 101, 103)]),
            .. BenchmarkReport.ChartLayer(question),
        ]);

        // Drawn and in the legend: no change and the benchmark with the lowest in-sample one-step RMSE (Holt here).
        var legend = chart.Layout(640, 260).OfType<TextShape>().Select(t => t.Text).Where(t => t.StartsWith("Benchmark", StringComparison.Ordinal)).ToList();
        Assert.Equal(2, legend.Count);
        Assert.Contains(legend, t => t.Contains("No change", StringComparison.Ordinal));
        Assert.Contains(legend, t => t.Contains("Holt", StringComparison.Ordinal));
        // Every benchmark is in the page's drawing, the four others hidden until the reader shows them.
        var svg = chart.ToSvg();
        foreach (var method in new[] { "naive", "drift", "mean", "ses", "holt", "damped" })
        {
            Assert.Contains($"data-series=\"benchmark:{method}\"", svg, StringComparison.Ordinal);
        }
        // The four others are hidden: their lines and their legend entries (each in a hidden group of its own key).
        var hiddenKeys = System.Text.RegularExpressions.Regex.Matches(svg, "data-series=\"([^\"]+)\" visibility=\"hidden\"").Select(m => m.Groups[1].Value).Distinct().Order().ToList();
        Assert.Equal(["benchmark:damped", "benchmark:drift", "benchmark:mean", "benchmark:ses"], hiddenKeys);
        // The PDF drawing has only what is shown.
        Assert.DoesNotContain(chart.Layout(640, 260).OfType<PolylineShape>(), l => l.Colour == BenchmarkReport.ColourOf("drift"));
    }
}
