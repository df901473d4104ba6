using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Results;

/// <summary>
/// Computes a panel's consensus per question-period from the answers counted in a closed round:
/// the trimmed median for Point questions (band Q1-Q3 of the retained answers), quantile
/// averaging of the experts' P10/P50/P90 for Range questions (band P10-P90), with equal weights
/// or the panel members' track-record weights (for each question the set of its response format:
/// scaled absolute error for Point, scaled interval score for Range, as the backtest evaluates them)
/// or calibration-question weights (the weighted linear pool for Range questions, the weighted
/// median for Point questions; equal weights while no expert has a calibration weight).
/// Calibration questions take no part in the consensus.
/// </summary>
public sealed class ConsensusPublisher(PanelRoundDbContext db, TimeProvider clock, IMemberWeights weights)
{
    /// <summary>The consensus of each question-period of the round.</summary>
    /// <param name="panel">The panel, with its questions.</param>
    /// <param name="round">A closed round of it.</param>
    /// <param name="weighting">Equal or track-record; default the panel's setting.</param>
    /// <param name="known">Track-record weights the caller has computed already (as of the panel's conclusion, or now); loaded when null.</param>
    public async Task<IReadOnlyList<ConsensusEntry>> ComputeAsync(Panel panel, Round round, ConsensusWeighting? weighting = null, MemberWeightsByFormat? known = null)
    {
        var answers = await CountedAnswers.LoadAsync(db, round.Id);
        var mode = weighting ?? panel.Settings.Weighting;
        var memberWeights = mode == ConsensusWeighting.TrackRecord
            ? known ?? await weights.ForPanelAsync(panel.Id, panel.ConcludedAt ?? clock.GetUtcNow().UtcDateTime)
            : null;
        var calibrationWeights = mode == ConsensusWeighting.Calibration
            ? await Calibration.CalibrationScoring.MembershipWeightsAsync(db, panel, round)
            : null;
        return Compute(panel, answers, memberWeights, calibrationWeights);
    }

    /// <summary>The consensus of each question-period from answers already read.</summary>
    /// <param name="panel">The panel, with its questions.</param>
    /// <param name="answers">The answers that count in the round.</param>
    /// <param name="memberWeights">Track-record weights (track-record weighting), else null.</param>
    /// <param name="calibrationWeights">Calibration-question weights by membership (calibration weighting), else null.</param>
    public IReadOnlyList<ConsensusEntry> Compute(
        Panel panel, IReadOnlyList<CountedAnswer> answers, MemberWeightsByFormat? memberWeights, IReadOnlyDictionary<int, double>? calibrationWeights)
    {
        ArgumentNullException.ThrowIfNull(panel);
        ArgumentNullException.ThrowIfNull(answers);
        var settings = FeedbackCalculator.SettingsOf(panel.Settings);
        var now = clock.GetUtcNow().UtcDateTime;
        var entries = new List<ConsensusEntry>();
        var byPeriod = answers.ToLookup(a => (a.QuestionId, a.Period));
        foreach (var q in panel.Questions.Where(q => !q.IsCalibration).OrderBy(q => q.Order))
        {
            foreach (var period in q.TargetPeriods.Split(','))
            {
                var forPeriod = byPeriod[(q.Id, period)].ToList();
                if (forPeriod.Count == 0)
                {
                    continue;
                }
                var set = memberWeights?.For(q.Format);
                var w = set is null ? null : forPeriod.Select(a => set.GetValueOrDefault(a.MembershipId, 0)).ToList();
                if (w is not null && w.All(x => x <= 0))
                {
                    w = null;
                }
                var cw = calibrationWeights is null ? null : forPeriod.Select(a => calibrationWeights.GetValueOrDefault(a.MembershipId, 0)).ToList();
                var value = cw is not null && cw.Any(x => x > 0)
                    ? (q.Format == ResponseFormat.Range
                        ? CalibrationConsensus.ForRange([.. forPeriod.Select(a => new RangeAnswer(a.P10!.Value, a.P50!.Value, a.P90!.Value))], cw,
                            panel.Settings.CalibrationOvershoot, q.LogScale ? BackgroundMeasure.LogUniform : BackgroundMeasure.Uniform)
                        : CalibrationConsensus.ForPoint([.. forPeriod.Select(a => a.Value!.Value)], cw))
                    : q.Format == ResponseFormat.Range
                    ? Consensus.ForRange(forPeriod.Select(a => new RangeAnswer(a.P10!.Value, a.P50!.Value, a.P90!.Value)).ToList(), settings, w)
                    : Consensus.ForPoint(forPeriod.Select(a => a.Value!.Value).ToList(), settings, w);
                entries.Add(new ConsensusEntry
                {
                    PanelId = panel.Id, QuestionId = q.Id, Period = period, Value = value.Value, Low = value.Low, High = value.High,
                    N = value.N, Method = value.Method.ToString(), PublishedAt = now,
                });
            }
        }
        return entries;
    }
}

/// <summary>Track-record weights of a panel's memberships (by membership id), one set per response format; a set is null when the panel has no question of that format.</summary>
public sealed record MemberWeightsByFormat(IReadOnlyDictionary<int, double>? Point, IReadOnlyDictionary<int, double>? Range)
{
    /// <summary>The set a question of the format uses.</summary>
    public IReadOnlyDictionary<int, double>? For(ResponseFormat format) => format == ResponseFormat.Range ? Range : Point;
}

/// <summary>Track-record weights of a panel's memberships, known at a moment; null when none apply.</summary>
public interface IMemberWeights
{
    Task<MemberWeightsByFormat?> ForPanelAsync(int panelId, DateTime asOf);
}
