using System.Globalization;
using System.Text;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>One row of the tidy consensus table: one question-period of a concluded panel.</summary>
/// <remarks>
/// The columns, in this order, are an interface that financial models and scripts depend on:
/// <c>panel_id,panel,question_id,question,indicator,unit,format,period,consensus,low,high,band,n,method,round,published_at</c>;
/// the extended files (<c>?include=benchmarks,derived</c>) add <c>source</c> last (<see cref="ConsensusExtras"/>).
/// </remarks>
public sealed record ConsensusRow(
    int PanelId, string Panel, int QuestionId, string Question, string Indicator, string Unit, string Format, string Period,
    double Consensus, double Low, double High, string Band, int N, string Method, int Round, DateTime PublishedAt, string Source = ConsensusExtras.ConsensusSource);

/// <summary>The published consensus of a panel as a tidy table, and the same table as CSV and XLSX.</summary>
public static class ConsensusExport
{
    /// <summary>The CSV and XLSX columns, in their fixed order.</summary>
    public static readonly IReadOnlyList<string> Columns =
        ["panel_id", "panel", "question_id", "question", "indicator", "unit", "format", "period", "consensus", "low", "high", "band", "n", "method", "round", "published_at"];

    private static readonly double[] TidyWidths = [8, 36, 11, 36, 26, 14, 8, 9, 13, 13, 13, 9, 5, 16, 6, 22];

    /// <summary>What <c>low</c> and <c>high</c> are: P10-P90 for Range questions, Q1-Q3 for Point questions.</summary>
    public static string BandOf(ResponseFormat format) => format == ResponseFormat.Range ? "P10-P90" : "Q1-Q3";

    /// <summary>The rows of a concluded panel in question order, then period order; null when the panel does not exist; empty before conclusion.</summary>
    public static async Task<(Panel Panel, IReadOnlyList<ConsensusRow> Rows)?> LoadAsync(PanelRoundDbContext db, int panelId)
    {
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds)
            .FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return null;
        }
        var entries = await db.Consensus.AsNoTracking().Where(c => c.PanelId == panelId).ToListAsync();
        // The consensus is published from the last closed round (PanelWorkflow.ConcludeAsync).
        var round = panel.Rounds.Where(r => r.State == RoundState.Closed).Select(r => r.Number).DefaultIfEmpty(0).Max();
        var order = panel.Questions.ToDictionary(q => q.Id);
        var rows = entries
            .Where(e => order.ContainsKey(e.QuestionId))
            .OrderBy(e => order[e.QuestionId].Order).ThenBy(e => Period.Parse(e.Period))
            .Select(e =>
            {
                var q = order[e.QuestionId];
                return new ConsensusRow(panel.Id, panel.Title, q.Id, q.Label, q.Indicator!.Key, q.Indicator.UnitLabel, q.Format.ToString(), e.Period,
                    e.Value, e.Low, e.High, BandOf(q.Format), e.N, e.Method, round, e.PublishedAt);
            }).ToList();
        return (panel, rows);
    }

    /// <summary>Header row, comma-separated, invariant numbers (round-trip precision), ISO 8601 UTC times, UTF-8 without BOM, texts neutralised.</summary>
    public static byte[] ToCsv(IReadOnlyList<ConsensusRow> rows, bool withSource = false)
    {
        using var writer = new StringWriter(CultureInfo.InvariantCulture) { NewLine = "\r\n" };
        CsvFiles.Write(writer, withSource ? [.. Columns, ConsensusExtras.SourceColumn] : Columns,
            rows.Select(r => (IReadOnlyList<string?>)Fields(r, withSource).Select(f => f.Number is { } n ? Num(n) : SafeCells.Text(f.Text)).ToList()));
        return new UTF8Encoding(false).GetBytes(writer.ToString());
    }

    /// <summary>
    /// The workbook: a tidy sheet with exactly the CSV's columns (numbers as numeric cells), one
    /// sheet per question with its path laid out by period (periods as columns; consensus, low and
    /// high as rows) for a model to reference, and a sheet with the method, settings and caution.
    /// </summary>
    public static byte[] ToXlsx(Panel panel, IReadOnlyList<ConsensusRow> rows, bool withSource = false)
    {
        IReadOnlyList<string> columns = withSource ? [.. Columns, ConsensusExtras.SourceColumn] : Columns;
        var sheets = new List<XlsxSheet>
        {
            new("consensus", withSource ? [.. TidyWidths, 20] : TidyWidths,
                [columns.Select(c => (XlsxCell)c).ToList(), .. rows.Select(r => (IReadOnlyList<XlsxCell>)Fields(r, withSource).ToList())]),
        };
        foreach (var question in rows.Where(r => r.Source == ConsensusExtras.ConsensusSource).GroupBy(r => r.QuestionId))
        {
            var first = question.First();
            var periods = question.ToList();
            sheets.Add(new XlsxSheet($"Q{first.QuestionId} {first.Question}", [30, .. periods.Select(_ => 13.0)],
            [
                [$"{first.Question} ({first.Unit})", .. periods.Select(p => (XlsxCell)p.Period)],
                ["consensus", .. periods.Select(p => (XlsxCell)p.Consensus)],
                [$"low ({first.Band})", .. periods.Select(p => (XlsxCell)p.Low)],
                [$"high ({first.Band})", .. periods.Select(p => (XlsxCell)p.High)],
                ["n", .. periods.Select(p => (XlsxCell)p.N)],
            ]));
        }
        var s = panel.Settings;
        sheets.Add(new XlsxSheet("method", [34, 90],
        [
            ["panel", panel.Title],
            ["published", rows.Count == 0 ? "not published" : Iso(rows[0].PublishedAt)],
            ["consensus from round", rows.Count == 0 ? "" : rows[0].Round.ToString(CultureInfo.InvariantCulture)],
            ["Point questions", "consensus: the median of the answers the outlier rule retains (or the track-record-weighted median); low/high: Q1-Q3 of those answers (Hyndman & Fan type 7)"],
            ["Range questions", "consensus and low/high: the (trimmed, or track-record-weighted) averages of the experts' P50, P10 and P90 (quantile averaging)"],
            ["outlier rule", Words.OutlierRule(s.OutlierRule)],
            ["trim fraction", (XlsxCell)s.TrimFraction],
            ["consensus threshold (relative IQR)", (XlsxCell)s.ConsensusThreshold],
            ["weighting", Words.Weighting(s.Weighting)],
            ["minimum group size", (XlsxCell)s.MinimumGroupSize],
            ["caution", Caution],
        ], BoldFirstRow: false));
        return Xlsx.Write(sheets);
    }

    /// <summary>The caution every export and report carries.</summary>
    public const string Caution = "A forecast by an expert panel, not a valuation and not investment advice. Rely on licensed valuers for valuations and follow the regulation that applies where you invest and lend.";

    private static IEnumerable<XlsxCell> Fields(ConsensusRow r, bool withSource = false) =>
    [
        r.PanelId, r.Panel, r.QuestionId, r.Question, r.Indicator, r.Unit, r.Format, r.Period,
        r.Consensus, r.Low, r.High, r.Band, r.N, r.Method, r.Round, Iso(r.PublishedAt),
        .. withSource ? new XlsxCell[] { r.Source } : [],
    ];

    private static string Num(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    private static string Iso(DateTime t) => DateTime.SpecifyKind(t, DateTimeKind.Utc).ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture);
}

/// <summary>Settings and methods in words, never as identifiers.</summary>
public static class Words
{
    public static string OutlierRule(OutlierRuleSetting rule) => rule switch
    {
        OutlierRuleSetting.SymmetricTrim => "symmetric trim (the same share cut from each end)",
        OutlierRuleSetting.ModifiedZScore => "modified z-score above 3.5 (Iglewicz & Hoaglin 1993)",
        _ => "Tukey fences, 1.5 x IQR beyond the quartiles (Tukey 1977)",
    };

    /// <summary>A consensus method's identifier (as stored and exported) in words.</summary>
    public static string Method(string method) => method switch
    {
        "TrimmedMedian" => "trimmed median",
        "WeightedTrimmedMedian" => "track-record-weighted median",
        "QuantileAverage" => "quantile average",
        "WeightedQuantileAverage" => "track-record-weighted quantile average",
        "CalibrationWeightedPool" => "calibration-weighted linear pool",
        "CalibrationWeightedMedian" => "calibration-weighted median",
        _ => method,
    };

    public static string Weighting(ConsensusWeighting weighting) => weighting switch
    {
        ConsensusWeighting.TrackRecord => "track-record weights (scaled error, shrunk towards the pool)",
        ConsensusWeighting.Calibration => "calibration-question weights (calibration x information)",
        _ => "equal weights",
    };
}
