using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>
/// The extended consensus files: the consensus rows, then the benchmark paths and the derived series in
/// additional rows, with a <c>source</c> column after the fixed ones: <c>consensus</c>, <c>benchmark:&lt;method&gt;</c>
/// or <c>derived</c>. Asked for with <c>?include=benchmarks,derived</c>; without it the files are unchanged.
/// </summary>
/// <remarks>
/// Benchmark rows: <c>consensus</c> is the point forecast, <c>low</c>/<c>high</c> its P10/P90 (<c>band</c> P10-P90),
/// <c>n</c> the length of the reference series, <c>method</c> the method's key. Derived rows (a relation's term
/// that is not asked): <c>question_id</c> 0, <c>question</c> the term's name, <c>consensus</c> = <c>low</c> = <c>high</c>
/// the value implied by the other two consensus values (<c>band</c> "none": no band is derived), <c>n</c> the smaller n
/// of the two, <c>method</c> the relation.
/// </remarks>
public static class ConsensusExtras
{
    public const string SourceColumn = "source";
    public const string ConsensusSource = "consensus";
    public const string DerivedSource = "derived";
    private static readonly string[] Known = ["benchmarks", "derived"];

    /// <summary>Reads <c>include</c>: a comma-separated subset of <c>benchmarks</c> and <c>derived</c>; errors under the field <c>include</c>.</summary>
    public static bool TryParseInclude(string? include, FieldErrors errors, out bool benchmarks, out bool derived)
    {
        benchmarks = derived = false;
        if (include is null)
        {
            return true;
        }
        var parts = include.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries);
        var unknown = parts.Where(p => !Known.Contains(p, StringComparer.OrdinalIgnoreCase)).ToList();
        if (parts.Length == 0 || unknown.Count > 0)
        {
            errors.Add("include", "include is a comma-separated list of benchmarks and derived.");
            return false;
        }
        benchmarks = parts.Contains("benchmarks", StringComparer.OrdinalIgnoreCase);
        derived = parts.Contains("derived", StringComparer.OrdinalIgnoreCase);
        return true;
    }

    /// <summary>The consensus rows (marked <c>consensus</c>) followed by the asked-for extra rows.</summary>
    public static async Task<IReadOnlyList<ConsensusRow>> ExtendAsync(
        PanelRoundDbContext db, PanelResults results, Panel panel, IReadOnlyList<ConsensusRow> rows, bool benchmarks, bool derived)
    {
        var all = rows.ToList();
        var round = rows.Count > 0 ? rows[0].Round : 0;
        var published = rows.Count > 0 ? rows[0].PublishedAt : panel.ConcludedAt ?? DateTime.UtcNow;
        if (benchmarks && await new PanelBenchmarks(db).BuildAsync(panel.Id) is { } b)
        {
            // Calibration questions take no part in the exports: their benchmarks stay out as well.
            var calibration = panel.Questions.Where(q => q.IsCalibration).Select(q => q.Id).ToHashSet();
            foreach (var q in b.Questions.Where(q => !calibration.Contains(q.QuestionId)))
            {
                foreach (var m in q.Benchmarks.Where(m => m.Available))
                {
                    all.AddRange(m.Path.Select(p => new ConsensusRow(panel.Id, panel.Title, q.QuestionId, q.Question, q.Indicator, q.Unit, q.Format, p.Period,
                        p.Value, p.P10, p.P90, "P10-P90", q.ReferenceN, m.Method, round, published, "benchmark:" + m.Method)));
                }
            }
        }
        if (derived && await results.BuildAsync(panel.Id) is { } view)
        {
            var relations = await db.Relations.AsNoTracking().Where(r => r.PanelId == panel.Id).OrderBy(r => r.Id).ToListAsync();
            var n = rows.ToDictionary(r => (r.QuestionId, r.Period), r => r.N);
            foreach (var check in PanelRelations.OnConsensus(relations, view).Where(c => c.DerivedRole is not null))
            {
                var term = check.DerivedRole switch { "result" => check.Relation.Result, "first" => check.Relation.First, _ => check.Relation.Second };
                var inputs = new[] { check.Relation.Result, check.Relation.First, check.Relation.Second }.Where(t => t.QuestionId is not null).Select(t => t.QuestionId!.Value).ToList();
                foreach (var point in check.Derived)
                {
                    var count = inputs.Select(q => n.GetValueOrDefault((q, point.Period))).DefaultIfEmpty(0).Min();
                    all.Add(new ConsensusRow(panel.Id, panel.Title, 0, term.Label, "", term.Unit, ResponseFormat.Point.ToString(), point.Period,
                        point.Value, point.Value, point.Value, "none", count, check.Relation.Formula, round, published, DerivedSource));
                }
            }
        }
        return all;
    }
}
