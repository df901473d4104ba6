using PanelRound.Core.Domain;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>The benchmark forecasts and relation checks in charts and in the dossier.</summary>
public static class BenchmarkReport
{
    // Muted, distinguishable from the rounds' blues and the consensus's orange.
    private static readonly Dictionary<string, string> Colours = new(StringComparer.Ordinal)
    {
        ["naive"] = "#7f7f7f",
        ["drift"] = "#2ca02c",
        ["mean"] = "#bcbd22",
        ["ses"] = "#17becf",
        ["holt"] = "#e377c2",
        ["damped"] = "#8c564b",
        ["seasonal-naive"] = "#9467bd",
    };

    public static string ColourOf(string method) => Colours.GetValueOrDefault(method, "#555555");

    /// <summary>The series key of a benchmark in a chart (the page's controls show and hide it by this key).</summary>
    public static string SeriesKey(string method) => "benchmark:" + method;

    /// <summary>
    /// The benchmark with the best in-sample fit: the lowest root mean squared one-step error on the reference series
    /// (ties by method key); null when no benchmark has one.
    /// </summary>
    public static BenchmarkDto? BestFit(QuestionBenchmarksDto? question) =>
        question?.Benchmarks.Where(b => b.Available && b.Path.Count > 0 && b.InSampleRmse is { } r && double.IsFinite(r))
            .OrderBy(b => b.InSampleRmse).ThenBy(b => b.Method, StringComparer.Ordinal).FirstOrDefault();

    /// <summary>True for the benchmarks a chart draws unless asked otherwise: no change, and the best in-sample fit.</summary>
    public static bool DrawnByDefault(QuestionBenchmarksDto question, BenchmarkDto benchmark) =>
        benchmark.Method == "naive" || benchmark.Method == BestFit(question)?.Method;

    /// <summary>
    /// The chart layer: each available benchmark's path as a thin dashed line. Shown are the no-change forecast and
    /// the benchmark with the best in-sample fit (<see cref="BestFit"/>); the others are hidden series (the page's
    /// table lists them all and can show each on the chart; the dossier's table lists them).
    /// </summary>
    /// <remarks>Implementation note: six dashed lines over the rounds' bands hid the panel's own answers and filled the legend with six rows.</remarks>
    public static IReadOnlyList<ChartSeries> ChartLayer(QuestionBenchmarksDto? question)
    {
        if (question is null)
        {
            return [];
        }
        var best = BestFit(question)?.Method;
        return question.Benchmarks.Where(b => b.Available && b.Path.Count > 0)
            .Select(b => new ChartSeries("Benchmark: " + b.Name + (b.Method == best && b.Method != "naive" ? " (best in-sample fit)" : ""), SeriesKind.Line, ColourOf(b.Method),
                b.Path.Select(p => new ChartPoint(Period.Parse(p.Period), p.Value)).ToList(), Dashed: true,
                Hidden: !DrawnByDefault(question, b), Key: SeriesKey(b.Method)))
            .ToList();
    }

    /// <summary>The benchmark table of a question in the dossier: per method, the path with its P10-P90 and the in-sample RMSE.</summary>
    public static void Table(PdfReport pdf, QuestionBenchmarksDto? question)
    {
        if (question is null || question.Benchmarks.All(b => !b.Available || b.Path.Count == 0))
        {
            return;
        }
        var periods = question.Benchmarks.Where(b => b.Available).SelectMany(b => b.Path.Select(p => p.Period)).Distinct().OrderBy(p => Period.Parse(p)).ToList();
        pdf.Paragraph($"Statistical benchmarks from the reference series ({question.ReferenceN} observations, {question.ReferenceFrom} to {question.ReferenceTo}): point forecast and 80% interval (P10 – P90)", 9.5, bold: true);
        pdf.Paragraph("The chart draws no change and the benchmark with the best in-sample fit (lowest one-step RMSE); the table lists them all.", 8, colour: "#555555");
        var d = question.Decimals;
        pdf.Table(["Benchmark", .. periods, "In-sample RMSE"],
            question.Benchmarks.Where(b => b.Available).Select(b => (IReadOnlyList<string>)
            [
                b.Name,
                .. periods.Select(p => b.Path.FirstOrDefault(x => x.Period == p) is { } x ? $"{F(x.Value, d)} ({F(x.P10, d)} – {F(x.P90, d)})" : "–"),
                b.InSampleRmse is { } r ? F(r, d) : "–",
            ]).ToList(),
            [2.2, .. periods.Select(_ => 1.6), 1.1], new HashSet<int>(Enumerable.Range(1, periods.Count + 1)), size: 6.5);
        var missing = question.Benchmarks.Where(b => !b.Available).ToList();
        if (missing.Count > 0)
        {
            pdf.Paragraph("Not available: " + string.Join("; ", missing.Select(b => $"{b.Name} ({b.Reason})")), 8, colour: "#555555");
        }
    }

    /// <summary>The relations section of the dossier: the check on the consensus per period, and derived paths.</summary>
    public static void Relations(PdfReport pdf, IReadOnlyList<RelationConsensusCheck>? checks)
    {
        if (checks is null || checks.Count == 0)
        {
            return;
        }
        pdf.NewPage();
        pdf.Heading("Consistency across related questions", 2);
        foreach (var c in checks)
        {
            pdf.Paragraph(c.Relation.Formula, 9.5, bold: true);
            pdf.Paragraph(c.DerivedRole is null
                ? $"The result implied by the consensus of the other two against its own consensus; flagged beyond ±{c.Tolerance * 100:0.#}%."
                : $"Only two of the three are asked: the {c.DerivedRole} term is derived from the consensus of the other two (marked as derived in the exports).", 8.5);
            pdf.Table(["Period", c.Relation.Result.Label, c.Relation.First.Label, c.Relation.Second.Label, "Implied result", "Difference", "Flag"],
                c.Periods.Select(p => (IReadOnlyList<string>)[p.Period, G(p.Result), G(p.First), G(p.Second), G(p.ImpliedResult),
                    NumberText.SignedPercent(p.RelativeDifference), p.Flagged ? "CHECK" : ""]).ToList(),
                [0.8, 1.3, 1.3, 1.3, 1.3, 1, 0.7], new HashSet<int> { 1, 2, 3, 4, 5 });
        }
    }

    private static string F(double v, int decimals) => NumberText.Fixed(v, Math.Clamp(decimals, 0, 6));

    private static string G(double? v) => v is { } x && double.IsFinite(x) ? NumberText.Format(x, "#,##0.###") : NumberText.Missing;
}
