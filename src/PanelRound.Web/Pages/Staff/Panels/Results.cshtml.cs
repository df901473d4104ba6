using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Core.Statistics;

namespace PanelRound.Web.Pages.Staff.Panels;

/// <summary>Results per question for staff: distributions per round, convergence, stability, outliers by panel code, stop suggestion.</summary>
public class ResultsModel(PanelResults results, ScorecardService scorecard, PanelBenchmarks benchmarks, PanelRelations relations, CalibrationResults calibration) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    public PanelResultsView View { get; private set; } = null!;

    /// <summary>Equal-weight and track-record consensus of the last closed round, side by side; null before any round closed.</summary>
    public ConsensusComparison? Comparison { get; private set; }

    /// <summary>The statistical benchmarks per question.</summary>
    public PanelBenchmarksDto? Benchmarks { get; private set; }

    /// <summary>The relations checked on the consensus, per period.</summary>
    public IReadOnlyList<RelationConsensusCheck> Relations { get; private set; } = [];

    /// <summary>The relations checked on each expert's own answers, by panel code.</summary>
    public IReadOnlyList<(RelationDto Relation, IReadOnlyList<RelationCodeCheck> Codes)> RelationsByCode { get; private set; } = [];

    public QuestionBenchmarksDto? BenchmarksOf(int questionId) => Benchmarks?.Questions.FirstOrDefault(q => q.QuestionId == questionId);

    /// <summary>The calibration questions' scores and weights; null when the panel has none.</summary>
    public PanelCalibrationView? Calibration { get; private set; }

    /// <summary>Equal, track-record and calibration-weighted consensus side by side; null without calibration questions or a closed round.</summary>
    public CalibrationComparison? CalibrationComparison { get; private set; }

    /// <summary>Whether the stop advice rests on a closed round (frozen), not on the answers of a round still open.</summary>
    public static bool AdviceIsFinal(QuestionResult q) => q.Periods.SelectMany(p => p.Rounds).MaxBy(r => r.Round) is not { Frozen: false };

    /// <summary>The stop advice in words, with the round it rests on: "so far" while that round is still open.</summary>
    public static string AdviceWords(QuestionResult q)
    {
        var words = q.Suggestion switch
        {
            StopReason.ConsensusReached => "consensus reached",
            StopReason.Stable => "stable",
            StopReason.RoundCapReached => "round cap reached",
            _ => "keep going",
        };
        return q.Periods.SelectMany(p => p.Rounds).MaxBy(r => r.Round) switch
        {
            null => char.ToUpperInvariant(words[0]) + words[1..],
            { Frozen: true } last => $"After round {last.Round}: {words}",
            var last => $"Round {last.Round} still open, so far: {words}",
        };
    }

    public bool IsCalibration(int questionId) => Calibration?.Questions.Any(q => q.QuestionId == questionId) == true;

    public static readonly string[] RoundColours = ["#1f77b4", "#ff7f0e", "#9467bd", "#8c564b", "#e377c2"];

    public async Task<IActionResult> OnGetAsync()
    {
        // One read of the panel for everything on the page.
        var snapshot = await results.SnapshotAsync(Id);
        if (snapshot is null)
        {
            return NotFound();
        }
        var view = PanelResults.Build(snapshot);
        View = view;
        Comparison = await scorecard.CompareAsync(snapshot);
        Benchmarks = benchmarks.Build(snapshot);
        Relations = PanelRelations.OnConsensus(await snapshot.RelationsAsync(), view);
        RelationsByCode = await relations.ByPanelCodeAsync(snapshot);
        var calibrationData = CalibrationScoring.Of(snapshot);
        if (calibrationData.Questions.Count > 0)
        {
            Calibration = CalibrationResults.ViewOf(calibrationData);
            CalibrationComparison = await calibration.CompareAsync(snapshot, calibrationData, Comparison);
        }
        return Page();
    }
}
