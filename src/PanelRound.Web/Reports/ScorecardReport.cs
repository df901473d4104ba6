using System.Globalization;
using System.Text;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>
/// The director's scorecard as files: one CSV row per expert with every figure the scorecard
/// shows and the n it rests on, and a PDF with the scorecard, the consensus and the no-change
/// forecast scored alike, and the backtest. Both take the figures from the scorecard API's own
/// records, so the files and <c>GET /api/scorecard</c> cannot disagree.
/// </summary>
public static class ScorecardReport
{
    /// <summary>The columns of <c>experts.csv</c>, in order.</summary>
    public static readonly IReadOnlyList<string> Columns =
    [
        "expert", "ranked", "rank", "n", "mae", "mean_error", "rmse", "n_mape", "mape", "n_scaled", "scaled_mae", "scaled_mean_error", "bias",
        "n_range", "coverage", "interval_score", "n_range_scaled", "scaled_interval_score", "n_scaled_naive", "scaled_skill",
        "n_paired", "first_to_final_change", "weight_n", "weight", "range_weight_n", "range_weight",
    ];

    public static byte[] ToCsv(ScorecardApi.ScorecardDto card)
    {
        using var writer = new StringWriter(CultureInfo.InvariantCulture) { NewLine = "\r\n" };
        CsvFiles.Write(writer, Columns, card.Experts.Select(e => (IReadOnlyList<string?>)
        [
            SafeCells.Text(e.Expert), e.Ranked ? "1" : "0", I(e.Rank), I(e.N), D(e.Mae), D(e.MeanError), D(e.Rmse), I(e.NMape), D(e.Mape),
            I(e.NScaled), D(e.ScaledMae), D(e.ScaledMeanError), e.Bias, I(e.NRange), D(e.Coverage), D(e.IntervalScore), I(e.NRangeScaled),
            D(e.ScaledIntervalScore), I(e.NScaledNaive), D(e.ScaledSkill), I(e.NPaired), D(e.FirstToFinalChange), I(e.WeightN), D(e.Weight),
            I(e.RangeWeightN), D(e.RangeWeight),
        ]));
        return new UTF8Encoding(false).GetBytes(writer.ToString());
    }

    public static byte[] ToPdf(ScorecardApi.ScorecardDto card, ScorecardApi.BacktestDto backtest, DateTime now)
    {
        var scope = card.Indicator is null && card.Period is null ? "all indicators and periods"
            : $"indicator {card.Indicator ?? "all"}, period {card.Period ?? "all"}";
        using var pdf = new PdfReport("Expert scorecard", "PanelRound expert scorecard", "Scores of forecasts, not valuations or investment advice.");
        pdf.Heading("Expert scorecard");
        pdf.Paragraph($"Final-round forecasts of {card.Panels} concluded panel(s), {scope}. Made {now:yyyy-MM-dd HH:mm} UTC. "
            + "Error = forecast − outcome: a positive mean error means over-forecasting. Scaled figures divide each error by the in-sample MAE of the "
            + "no-change forecast on the question's reference series (R. J. Hyndman and A. B. Koehler, International Journal of Forecasting 22, 2006), "
            + "so questions in different units pool. Coverage is the share of outcomes inside [P10, P90] (ideal 80%); the interval score follows "
            + "T. Gneiting and A. E. Raftery, JASA 102 (2007), α = 0.2. Skill is 1 − scaled MAE of the expert / of the no-change forecast. "
            + "Every figure shows the n it rests on; nobody is ranked on fewer than 3 forecasts.", 9);
        pdf.Table(["Rank", "Expert", "n", "MAE", "Mean error", "Scaled MAE (n)", "Bias", "Coverage (n)", "Skill (n)", "Weight (n)"],
            card.Experts.OrderBy(e => e.Rank ?? int.MaxValue).ThenBy(e => e.Expert, StringComparer.Ordinal).Select(e => (IReadOnlyList<string>)
            [
                e.Rank?.ToString(CultureInfo.InvariantCulture) ?? "–", e.Expert, I(e.N), F(e.Mae), F(e.MeanError), $"{F(e.ScaledMae)} ({e.NScaled})",
                BiasWords(e.Bias), $"{Pct(e.Coverage)} ({e.NRange})", $"{F(e.ScaledSkill)} ({e.NScaledNaive})", $"{F(e.Weight, "0.000")} ({e.WeightN})",
            ]).ToList(),
            [0.6, 1.2, 0.55, 1, 1, 1.35, 1.65, 1.35, 1.15, 1.3], new HashSet<int> { 0, 2, 3, 4, 5, 7, 8, 9 });
        pdf.Paragraph("Scored alike", 10, bold: true);
        pdf.Table(["Forecast", "n", "MAE", "Mean error", "Scaled MAE (n)", "Coverage (n)", "Skill (n)"],
        [
            Summary("Panel consensus", card.Consensus),
            Summary("No-change forecast", card.Naive),
        ], [2, 0.6, 1.1, 1.1, 1.4, 1.3, 1.2], new HashSet<int> { 1, 2, 3, 4, 5, 6 });

        // The backtest starts where its heading, introduction and table head fit together.
        pdf.EnsureSpace(220);
        pdf.Heading("Backtest of track-record weights", 2);
        pdf.Paragraph("Each past panel's consensus rebuilt with only the weights known before it closed, against equal weights (scaled MAE; lower is better). "
            + "Panels with no earlier record are marked and left out of the pooled figure. The published evidence on weighting is mixed; this promises nothing.", 9);
        pdf.Table(["Panel", "Closed", "History", "n", "Equal", "Weighted", "Difference"],
            backtest.Panels.Select(p => (IReadOnlyList<string>)
            [
                p.Panel, $"{p.ClosedOn:yyyy-MM-dd}", p.HasHistory ? I(p.HistoryItems) : "no history", I(p.N), F(p.EqualScaledMae), F(p.WeightedScaledMae), F(p.Difference),
            ]).ToList(),
            [2.4, 1.1, 1, 0.6, 1, 1, 1], new HashSet<int> { 3, 4, 5, 6 });
        var pooled = backtest.Pooled;
        pdf.Paragraph($"Pooled over {pooled.Panels} panel(s) with history, n = {pooled.N}: equal {F(pooled.EqualScaledMae)}, weighted {F(pooled.WeightedScaledMae)}, difference {F(pooled.Difference)}.", 9);
        // The paragraph stays with its table.
        pdf.EnsureSpace(120);
        pdf.Paragraph("The equal-weight consensus of each past panel against the no-change forecast and the best statistical benchmark on the same question-periods "
            + "(skill = 1 − scaled MAE of the consensus / of the other forecast; above 0 the panel was closer).", 9);
        pdf.Table(["Panel", "No change (n)", "Skill vs no change", "Best benchmark", "Skill vs best"],
            backtest.Panels.Select(p => (IReadOnlyList<string>)
            [
                p.Panel, $"{F(p.NaiveScaledMae, "0.000")} ({I(p.NNaive)})", F(p.SkillVsNaive),
                p.Best is { } b ? $"{b["benchmark:".Length..]} ({F(p.BestScaledMae, "0.000")})" : "–", F(p.SkillVsBest),
            ]).ToList(),
            [2.4, 1.2, 1.1, 1.6, 1], new HashSet<int> { 1, 2, 4 });
        pdf.Paragraph(card.Caution, 9, bold: true);
        return pdf.ToBytes();
    }

    private static IReadOnlyList<string> Summary(string label, ScorecardApi.ScorecardSummaryDto s) =>
        [label, I(s.N), F(s.Mae), F(s.MeanError), $"{F(s.ScaledMae)} ({s.NScaled})", $"{Pct(s.Coverage)} ({s.NRange})", $"{F(s.ScaledSkill)} ({s.NScaledNaive})"];

    private static string BiasWords(string? bias) => bias switch
    {
        "OverForecasts" => "over-forecasts",
        "UnderForecasts" => "under-forecasts",
        "Neutral" => "neutral",
        null => "–",
        _ => bias,
    };

    private static string I(int? v) => v?.ToString(CultureInfo.InvariantCulture) ?? "";

    private static string D(double? v) => v?.ToString("R", CultureInfo.InvariantCulture) ?? "";

    private static string F(double? v, string format = "0.00") => v is { } x && double.IsFinite(x) ? NumberText.Format(x, format) : NumberText.Missing;

    private static string Pct(double? v) => NumberText.Percent(v, 1);
}
