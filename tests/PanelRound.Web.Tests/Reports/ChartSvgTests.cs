using System.Globalization;
using System.Xml.Linq;
using PanelRound.Core.Domain;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Reports;

namespace PanelRound.Web.Tests.Reports;

/// <summary>
/// The chart as the pages get it (SVG): a missing year is a gap, every series has a legend entry (a hidden one too), and
/// the phone drawing keeps its text readable at 375 px.
/// </summary>
public class ChartSvgTests
{
    private static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    private static ChartPoint P(int year, double v, double? lo = null, double? hi = null) => new(Period.OfYear(year), v, lo, hi);

    private static XElement Parse(string svg) => XElement.Parse("<root>" + svg + "</root>");

    private static List<(double X, double Y)> PointsOf(XElement polyline) =>
        polyline.Attribute("points")!.Value.Split(' ').Select(p => p.Split(','))
            .Select(xy => (double.Parse(xy[0], CultureInfo.InvariantCulture), double.Parse(xy[1], CultureInfo.InvariantCulture))).ToList();

    /// <summary>The x position of a year's label on the axis (the labels stand at the middle of their year).</summary>
    private static double XOfYear(XElement svg, int year) =>
        double.Parse(svg.Descendants(Svg + "text").First(t => t.Value == year.ToString(CultureInfo.InvariantCulture)).Attribute("x")!.Value, CultureInfo.InvariantCulture);

    [Theory]
    [InlineData(640, 260, 1)]
    [InlineData(340, 300, 1.35)]
    public void ToSvg_MissingYear_DrawsNoSegmentAcrossTheGap(double width, double height, double textScale)
    {
        const string colour = "#d95f02";
        var chart = new ChartModel("Consensus path", "EUR/m²", 0, [new ChartSeries("Consensus", SeriesKind.Line, colour, [P(2027, 100), P(2028, 110), P(2030, 130)])]);
        var svg = Parse(chart.ToSvg(width, height, textScale)).Element(Svg + "svg")!;

        var x2028 = XOfYear(svg, 2028);
        var x2030 = XOfYear(svg, 2030);
        var lines = svg.Descendants(Svg + "polyline").Where(l => l.Attribute("stroke")?.Value == colour).Select(PointsOf)
            // The legend's sample line is horizontal and short; the data lines are what is checked.
            .Where(points => points.Count > 1 && points.Any(p => Math.Abs(p.X - x2028) < 0.5)).ToList();
        var run = Assert.Single(lines);
        // The run that reaches 2028 ends there: no segment goes on to 2030.
        Assert.Equal(x2028, run[^1].X, 0.5);
        Assert.DoesNotContain(run, p => Math.Abs(p.X - x2030) < 0.5);
        // 2030 is drawn as a dot on its own, one empty year after 2028.
        Assert.Contains(svg.Descendants(Svg + "circle"), c => Math.Abs(double.Parse(c.Attribute("cx")!.Value, CultureInfo.InvariantCulture) - x2030) < 0.5);
        Assert.Equal(2 * (XOfYear(svg, 2029) - x2028), x2030 - x2028, 0.5);
    }

    private static BenchmarkDto Benchmark(string method, string name, double rmse, double value) =>
        new(method, name, true, null, new Dictionary<string, double>(), 9, rmse, rmse, rmse,
            [new BenchmarkPointDto("2027", 1, value, value - 5, value + 5), new BenchmarkPointDto("2028", 2, value + 1, value - 6, value + 8)]);

    /// <summary>The chart of a results page: history, two rounds, the consensus band and path, and the six benchmarks (four hidden).</summary>
    private static ChartModel ResultsChart()
    {
        var question = new QuestionBenchmarksDto(1, "Rent", "rent", "EUR", 1, "Point", 10, "2017", "2026", false,
        [
            Benchmark("naive", "No change (naive)", 5, 100), Benchmark("drift", "Random walk with drift", 3, 103),
            Benchmark("mean", "Mean of the last 3 observations", 7, 98), Benchmark("ses", "Simple exponential smoothing", 4.5, 100.5),
            Benchmark("holt", "Holt's linear trend", 2.5, 104), Benchmark("damped", "Damped trend", 2.9, 103.5),
        ]);
        return new ChartModel("Office rent, Calderport harbour", "EUR/m²/month", 1,
        [
            new ChartSeries("Observed history", SeriesKind.Line, "#555555", [P(2024, 95), P(2026, 99)]),
            new ChartSeries("Round 1: median and Q1-Q3", SeriesKind.Band, "#9ecae1", [P(2027, 101, 99, 103), P(2028, 102, 100, 104)]),
            new ChartSeries("Round 2: median and Q1-Q3", SeriesKind.Band, "#3182bd", [P(2027, 101, 100, 102), P(2028, 102, 101, 103)]),
            new ChartSeries("Consensus and Q1-Q3 band", SeriesKind.Band, "#d95f02", [P(2027, 101, 100, 102), P(2028, 102, 101, 103)]),
            new ChartSeries("Consensus path", SeriesKind.Line, "#d95f02", [P(2027, 101), P(2028, 102)], Dashed: true),
            .. BenchmarkReport.ChartLayer(question),
        ]);
    }

    [Fact]
    public void ToResponsiveSvg_EverySeries_HasALegendLabelBesideItsColour_InBothDrawings()
    {
        var chart = ResultsChart();
        var drawings = Parse(chart.ToResponsiveSvg()).Elements(Svg + "svg").ToList();
        Assert.Equal(["chart-wide", "chart-narrow"], drawings.Select(d => d.Attribute("class")!.Value));
        foreach (var svg in drawings)
        {
            var texts = svg.Descendants(Svg + "text").ToList();
            foreach (var s in chart.Series)
            {
                var label = texts.Where(t => t.Value == s.Label).ToList();
                Assert.True(label.Count == 1, $"{svg.Attribute("class")!.Value}: the legend has {label.Count} entries for \"{s.Label}\".");
                // The swatch is drawn in the series' colour, in the same group as the label (so a control that shows the series shows its entry).
                var group = label[0].Parent!;
                Assert.Contains(group.Elements(), e => e != label[0] && (e.Attribute("fill")?.Value == s.Colour || e.Attribute("stroke")?.Value == s.Colour));
                if (s.Key is not null)
                {
                    Assert.Equal(s.Key, group.Attribute("data-series")?.Value);
                    Assert.Equal(s.Hidden, group.Attribute("visibility")?.Value == "hidden");
                }
            }
            Assert.Equal(chart.Title, svg.Element(Svg + "title")!.Value);
            Assert.Equal("img", svg.Attribute("role")!.Value);
            Assert.Contains("Consensus path", svg.Attribute("aria-label")!.Value, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void ToResponsiveSvg_NarrowDrawing_TextAtLeastTenPixelsAtAPhoneWidth()
    {
        // A 375 px phone: the page's container leaves about 351 px for the drawing (Bootstrap's 12 px gutters).
        const double shownWidth = 375 - 24;
        var narrow = Parse(ResultsChart().ToResponsiveSvg()).Elements(Svg + "svg").Single(d => d.Attribute("class")!.Value == "chart-narrow");
        var viewBoxWidth = double.Parse(narrow.Attribute("viewBox")!.Value.Split(' ')[2], CultureInfo.InvariantCulture);
        var sizes = narrow.Descendants(Svg + "text").Select(t => double.Parse(t.Attribute("font-size")!.Value, CultureInfo.InvariantCulture) * shownWidth / viewBoxWidth).ToList();
        Assert.NotEmpty(sizes);
        Assert.True(sizes.Min() >= 10.5, $"the smallest text is {sizes.Min():0.0} px at {shownWidth} px wide");
        // Nothing is written beyond the right edge: every label starts inside the view box.
        Assert.All(narrow.Descendants(Svg + "text").Where(t => t.Attribute("text-anchor")!.Value == "start"),
            t => Assert.InRange(double.Parse(t.Attribute("x")!.Value, CultureInfo.InvariantCulture), 0, viewBoxWidth - 20));
    }

    [Fact]
    public void ToSvg_BandPointWithoutLowAndHigh_IsDrawnAsADot()
    {
        var chart = new ChartModel("Forecasts", "%", 1,
            [new ChartSeries("Final-round forecast", SeriesKind.Band, "#0d6efd", [P(2027, 4.5), P(2028, 4.8, 4.2, 5.4)])]);
        var svg = Parse(chart.ToSvg()).Element(Svg + "svg")!;
        // Two values as dots (plus the legend's dot), one band as a shaded bar (plus the legend's swatch).
        Assert.Equal(3, svg.Descendants(Svg + "circle").Count(c => c.Attribute("fill")!.Value == "#0d6efd"));
        Assert.Equal(2, svg.Descendants(Svg + "rect").Count(c => c.Attribute("fill")!.Value == "#0d6efd"));
    }
}
