using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Scorecard;

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
