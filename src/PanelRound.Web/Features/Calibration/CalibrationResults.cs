using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Calibration;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Calibration;

/// <summary>A calibration question as staff see it.</summary>
public sealed record CalibrationQuestionLine(
    int QuestionId, string Label, string Period, string Unit, int Decimals, double? TrueValue, DateTime? TrueValueRecordedAt, bool LogScale, int Answers);

/// <summary>One expert's figures, by panel code: hits per bin (below P10, P10-P50, P50-P90, above P90), N, the chi-square statistic, calibration, information and normalised weight.</summary>
public sealed record ExpertCalibrationLine(string PanelCode, int N, IReadOnlyList<int> Hits, double Statistic, double Calibration, double Information, double Weight);

/// <summary>A combination scored as a virtual expert on the calibration questions.</summary>
public sealed record CombinationLine(string Name, int N, IReadOnlyList<int> Hits, double Calibration, double Information, double Combined)
{
    public static CombinationLine? Of(PerformanceScore? s) => s is null ? null : new(s.Key, s.N, s.Hits, s.Calibration, s.Information, s.Combined);
}

/// <summary>The settings a calibration computation used.</summary>
/// <param name="BinProbabilities">The probabilities of the four inter-quantile bins.</param>
/// <param name="Overshoot">The intrinsic range's overshoot on each side.</param>
/// <param name="FixedCutoff">The panel's fixed cut-off α; null when it is optimised.</param>
/// <param name="CutoffUsed">The α the weights used (the optimised one, or the fixed one); null before anything is scored.</param>
/// <param name="Round">"final" or "first": which round's answers are scored.</param>
/// <param name="RoundNumber">The round scored; null before it has closed.</param>
public sealed record CalibrationSettingsUsed(
    IReadOnlyList<double> BinProbabilities, double Overshoot, double? FixedCutoff, double? CutoffUsed, string Round, int? RoundNumber);

/// <summary>A panel's calibration figures.</summary>
/// <param name="PanelId">The panel.</param>
/// <param name="Title">Its title.</param>
/// <param name="Settings">The settings used.</param>
/// <param name="Questions">Its calibration questions.</param>
/// <param name="TruthsRecorded">How many have a true value.</param>
/// <param name="Experts">Per panel code, ordered by code.</param>
/// <param name="Weighted">The performance-weighted combination on the calibration questions.</param>
/// <param name="Equal">The equal-weight combination.</param>
/// <param name="Status">Why nothing is scored yet, or null.</param>
public sealed record PanelCalibrationView(
    int PanelId, string Title, CalibrationSettingsUsed Settings, IReadOnlyList<CalibrationQuestionLine> Questions, int TruthsRecorded,
    IReadOnlyList<ExpertCalibrationLine> Experts, CombinationLine? Weighted, CombinationLine? Equal, string? Status);

/// <summary>Equal, track-record and calibration-weighted consensus of one question-period.</summary>
public sealed record CalibrationComparedTarget(
    int QuestionId, string Question, string Period, string Format, string Unit, int Decimals, ComparedValue Equal, ComparedValue? TrackRecord, ComparedValue Calibration);

/// <summary>The three consensus of a panel's last closed round, side by side.</summary>
public sealed record CalibrationComparison(int PanelId, int Round, string Weighting, IReadOnlyList<CalibrationComparedTarget> Targets);

/// <summary>The out-of-sample check of a panel's calibration weights.</summary>
/// <param name="PanelId">The panel.</param>
/// <param name="Questions">Calibration questions with a true value.</param>
/// <param name="TrainingSize">Questions in each training part.</param>
/// <param name="Exhaustive">Every split of that size was run.</param>
/// <param name="Seed">The seed of the random sample of splits (null when exhaustive).</param>
/// <param name="Splits">Splits run.</param>
/// <param name="Compared">Splits with a weighted combination.</param>
/// <param name="WeightedWins">Splits where the weighted combination scored higher.</param>
/// <param name="MeanWeightedCombined">Mean combined score of the weighted combination.</param>
/// <param name="MeanEqualCombined">Mean combined score of the equal-weight combination.</param>
/// <param name="MeanWeightedCalibration">Mean calibration, weighted.</param>
/// <param name="MeanEqualCalibration">Mean calibration, equal.</param>
/// <param name="MeanWeightedInformation">Mean information, weighted.</param>
/// <param name="MeanEqualInformation">Mean information, equal.</param>
/// <param name="Ratio">Mean weighted over mean equal combined score.</param>
/// <param name="ElapsedMilliseconds">How long the computation took.</param>
/// <param name="Settings">The settings used.</param>
/// <param name="Status">Why it cannot run, or null.</param>
public sealed record CrossValidationView(
    int PanelId, int Questions, int TrainingSize, bool Exhaustive, int? Seed, int Splits, int Compared, int WeightedWins,
    double? MeanWeightedCombined, double? MeanEqualCombined, double? MeanWeightedCalibration, double? MeanEqualCalibration,
    double? MeanWeightedInformation, double? MeanEqualInformation, double? Ratio, long ElapsedMilliseconds, CalibrationSettingsUsed Settings, string? Status);

/// <summary>One panel of an expert's early record: the calibration questions of that panel.</summary>
public sealed record EarlyRecordLine(
    int PanelId, string Panel, string PanelCode, DateOnly RoundClosedOn, DateOnly? TruthsKnownOn, int N, IReadOnlyList<int> Hits,
    double Calibration, double Information);

/// <summary>
/// An expert's early record over every panel with scored calibration questions, beside the long-horizon record on the scorecard.
/// </summary>
/// <param name="ExpertId">The expert.</param>
/// <param name="Name">Their name (reviewer pages only).</param>
/// <param name="Panels">Panels whose calibration questions scored them.</param>
/// <param name="N">Calibration questions scored, over those panels.</param>
/// <param name="Hits">Truths per bin (below P10, P10-P50, P50-P90, above P90), summed over the panels.</param>
/// <param name="Calibration">1 − F(2·N·I(s, p)) of the summed hits: the calibration score over all N questions.</param>
/// <param name="Information">The mean information over all N questions (each panel's mean weighted by its N).</param>
/// <param name="LatestPanelId">The panel scored last (by the closing of the round scored).</param>
/// <param name="LatestPanel">Its title.</param>
/// <param name="LatestPanelCode">The expert's panel code there.</param>
/// <param name="LatestRoundClosedOn">When the round scored there closed.</param>
/// <param name="LatestWeight">The expert's normalised calibration-question weight on that panel.</param>
public sealed record ExpertEarlyRecord(
    int ExpertId, string Name, int Panels, int N, IReadOnlyList<int> Hits, double Calibration, double Information,
    int LatestPanelId, string LatestPanel, string LatestPanelCode, DateOnly LatestRoundClosedOn, double LatestWeight);

/// <summary>
/// The staff's calibration views: a panel's scores and weights, the equal, track-record and
/// calibration-weighted consensus side by side, the cross-validation, and an expert's early record.
/// </summary>
public sealed class CalibrationResults(PanelRoundDbContext db, ScorecardService scorecard, ConsensusPublisher publisher, TimeProvider clock)
{
    /// <summary>The most splits a cross-validation runs before it samples.</summary>
    public const int MaxSplits = 1000;

    /// <summary>The seed of the sample when there are more splits.</summary>
    public const int Seed = 20170401;

    private Task<Panel?> PanelAsync(int panelId) =>
        db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds)
            .AsSplitQuery().FirstOrDefaultAsync(p => p.Id == panelId);

    /// <summary>The panel's calibration figures; null for an unknown panel.</summary>
    public async Task<PanelCalibrationView?> ViewAsync(int panelId)
    {
        var panel = await PanelAsync(panelId);
        if (panel is null)
        {
            return null;
        }
        return ViewOf(await CalibrationScoring.LoadAsync(db, panel));
    }

    /// <summary>The calibration figures of loaded data (the panel with its questions, their indicators and rounds).</summary>
    public static PanelCalibrationView ViewOf(CalibrationData data)
    {
        ArgumentNullException.ThrowIfNull(data);
        var panel = data.Panel;
        var result = data.Evaluate();
        var questions = data.Questions.Select(q => new CalibrationQuestionLine(
            q.Id, q.Label, q.TargetPeriods, q.Indicator!.UnitLabel, q.Indicator.Decimals, q.TrueValue, q.TrueValueRecordedAt, q.LogScale,
            data.AnswerCounts.GetValueOrDefault(q.Id))).ToList();
        var status = data.Questions.Count == 0 ? "The panel has no calibration questions."
            : data.Round is null ? (panel.Settings.CalibrationUsesFirstRound ? "Round 1 has not closed yet." : "No round has closed yet.")
            : data.Items.Count == 0 ? "No true value has been recorded yet."
            : result is null ? "Nobody answered the calibration questions with a true value."
            : null;
        var experts = result?.Experts.Select(e => new ExpertCalibrationLine(
            e.Score.Key, e.Score.N, e.Score.Hits, e.Score.Statistic, e.Score.Calibration, e.Score.Information, e.Weight)).ToList() ?? [];
        return new PanelCalibrationView(panel.Id, panel.Title, SettingsUsed(panel, data.Round, result), questions, data.Items.Count, experts,
            CombinationLine.Of(result?.Weighted), CombinationLine.Of(result?.Equal), status);
    }

    /// <summary>Equal, track-record and calibration-weighted consensus of the last closed round; null when no round has closed or there are no calibration questions.</summary>
    public async Task<CalibrationComparison?> CompareAsync(int panelId, ConsensusComparison? known = null) =>
        await PanelSnapshot.LoadAsync(db, panelId) is { } snapshot ? await CompareAsync(snapshot, CalibrationScoring.Of(snapshot), known) : null;

    /// <summary>The comparison of a panel already read, with its calibration data (<see cref="CalibrationScoring.Of"/>), so the classical model runs once for the figures and the weights.</summary>
    public async Task<CalibrationComparison?> CompareAsync(PanelSnapshot snapshot, CalibrationData data, ConsensusComparison? known = null)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        ArgumentNullException.ThrowIfNull(data);
        var panel = snapshot.Panel;
        var last = snapshot.LastClosedRound;
        if (last is null || !panel.Questions.Any(q => q.IsCalibration))
        {
            return null;
        }
        // The weights of the consensus computed from the last closed round: the given data when it scores that round's answers.
        var scored = data.Round?.Id == CalibrationScoring.ScoringRound(panel, last)?.Id ? data : CalibrationScoring.Of(snapshot, last);
        var answers = snapshot.AnswersOf(last);
        var equal = publisher.Compute(panel, answers, null, null);
        var calibrated = publisher.Compute(panel, answers, null, CalibrationScoring.MembershipWeights(scored)).ToDictionary(c => (c.QuestionId, c.Period));
        var track = (known ?? await scorecard.CompareAsync(snapshot))?.Targets.ToDictionary(t => (t.QuestionId, t.Period));
        var questions = panel.Questions.ToDictionary(q => q.Id);
        var targets = equal.Select(e => new CalibrationComparedTarget(
            e.QuestionId, questions[e.QuestionId].Label, e.Period, questions[e.QuestionId].Format.ToString(),
            questions[e.QuestionId].Indicator!.UnitLabel, questions[e.QuestionId].Indicator!.Decimals, ComparedValue.Of(e),
            track?.GetValueOrDefault((e.QuestionId, e.Period))?.TrackRecord, ComparedValue.Of(calibrated[(e.QuestionId, e.Period)]))).ToList();
        return new CalibrationComparison(panel.Id, last.Number, panel.Settings.Weighting.ToString(), targets);
    }

    /// <summary>The cross-validation; the training size defaults to half the questions, rounded up, and must be 1 to N − 1.</summary>
    public async Task<Result<CrossValidationView>> CrossValidateAsync(int panelId, int? trainingSize)
    {
        var panel = await PanelAsync(panelId);
        if (panel is null)
        {
            return Result<CrossValidationView>.NotFound($"Panel {panelId} does not exist.");
        }
        var data = await CalibrationScoring.LoadAsync(db, panel);
        var n = data.Items.Count;
        var size = trainingSize ?? (n + 1) / 2;
        var settings = SettingsUsed(panel, data.Round, null);
        if (n < CrossValidation.MinimumQuestions || data.Assessments.Count == 0)
        {
            return Result<CrossValidationView>.Ok(new CrossValidationView(panelId, n, size, false, null, 0, 0, 0, null, null, null, null, null, null, null, 0, settings,
                $"A cross-validation needs at least {CrossValidation.MinimumQuestions} calibration questions with a true value and answers from a closed round; this panel has {n}."));
        }
        if (size < 1 || size >= n)
        {
            var errors = new FieldErrors();
            errors.Add("trainingSize", $"The training size is 1 to {n - 1} (the panel has {n} calibration questions with a true value).");
            return Result<CrossValidationView>.Invalid(errors);
        }
        var started = clock.GetTimestamp();
        var r = CrossValidation.Run(data.Items, data.Assessments, data.Settings, size, MaxSplits, Seed);
        var elapsed = (long)clock.GetElapsedTime(started).TotalMilliseconds;
        return Result<CrossValidationView>.Ok(new CrossValidationView(panelId, n, size, r.Exhaustive, r.Seed, r.Splits.Count, r.Compared, r.WeightedWins,
            r.MeanWeightedCombined, r.MeanEqualCombined, r.MeanWeightedCalibration, r.MeanEqualCalibration,
            r.MeanWeightedInformation, r.MeanEqualInformation, r.Ratio, elapsed, settings, null));
    }

    /// <summary>An expert's early record: per panel with scored calibration questions, the expert's calibration and information there.</summary>
    public async Task<IReadOnlyList<EarlyRecordLine>> EarlyRecordAsync(int expertId)
    {
        var panelIds = await db.Memberships.AsNoTracking().Where(m => m.ExpertId == expertId)
            .Where(m => db.Questions.Any(q => q.PanelId == m.PanelId && q.IsCalibration && q.TrueValue != null))
            .Select(m => new { m.PanelId, m.Id }).ToListAsync();
        var lines = new List<EarlyRecordLine>();
        foreach (var m in panelIds)
        {
            var panel = (await PanelAsync(m.PanelId))!;
            var data = await CalibrationScoring.LoadAsync(db, panel);
            var code = data.Codes.GetValueOrDefault(m.Id);
            var score = data.Evaluate()?.Experts.FirstOrDefault(e => e.Score.Key == code)?.Score;
            if (score is null || data.Round is null)
            {
                continue;
            }
            var truthsOn = data.Questions.Where(q => q.TrueValueRecordedAt is not null).Select(q => (DateTime?)q.TrueValueRecordedAt).Max();
            var closed = data.Round.ClosedAt ?? data.Round.ClosesAt;
            lines.Add(new EarlyRecordLine(panel.Id, panel.Title, code!, DateOnly.FromDateTime(closed),
                truthsOn is { } t ? DateOnly.FromDateTime(t) : null, score.N, score.Hits, score.Calibration, score.Information));
        }
        return [.. lines.OrderByDescending(l => l.RoundClosedOn)];
    }

    /// <summary>
    /// Every expert's early record, pooled over the panels with scored calibration questions (hits summed and scored
    /// once, Cooke 1991, ch. 12; information averaged over all the questions), with the latest panel's weight; in name order.
    /// </summary>
    public async Task<IReadOnlyList<ExpertEarlyRecord>> EarlyRecordsAsync()
    {
        var panelIds = await db.Questions.AsNoTracking().Where(q => q.IsCalibration && q.TrueValue != null)
            .Select(q => q.PanelId).Distinct().OrderBy(id => id).ToListAsync();
        var memberships = await db.Memberships.AsNoTracking().Where(m => panelIds.Contains(m.PanelId))
            .Select(m => new { m.Id, m.ExpertId, Name = m.Expert!.Name }).ToDictionaryAsync(m => m.Id);
        var scored = new List<(int ExpertId, string Name, Panel Panel, string Code, DateOnly ClosedOn, ExpertPerformance Performance)>();
        foreach (var panelId in panelIds)
        {
            var panel = (await PanelAsync(panelId))!;
            var data = await CalibrationScoring.LoadAsync(db, panel);
            if (data.Round is null || data.Evaluate() is not { } result)
            {
                continue;
            }
            var byCode = data.Codes.ToDictionary(c => c.Value, c => c.Key, StringComparer.Ordinal);
            var closedOn = DateOnly.FromDateTime(data.Round.ClosedAt ?? data.Round.ClosesAt);
            foreach (var e in result.Experts)
            {
                if (byCode.TryGetValue(e.Score.Key, out var membershipId) && memberships.TryGetValue(membershipId, out var m))
                {
                    scored.Add((m.ExpertId, m.Name, panel, e.Score.Key, closedOn, e));
                }
            }
        }
        return [.. scored.GroupBy(x => x.ExpertId).Select(g =>
        {
            var n = g.Sum(x => x.Performance.Score.N);
            var hits = Enumerable.Range(0, 4).Select(j => g.Sum(x => x.Performance.Score.Hits[j])).ToArray();
            var latest = g.OrderBy(x => x.ClosedOn).ThenBy(x => x.Panel.Id).Last();
            return new ExpertEarlyRecord(g.Key, latest.Name, g.Count(), n, hits, ClassicalModel.CalibrationOf(hits).Calibration,
                g.Sum(x => x.Performance.Score.N * x.Performance.Score.Information) / n,
                latest.Panel.Id, latest.Panel.Title, latest.Code, latest.ClosedOn, latest.Performance.Weight);
        }).OrderBy(r => r.Name, StringComparer.Ordinal).ThenBy(r => r.ExpertId)];
    }

    private static CalibrationSettingsUsed SettingsUsed(Panel panel, Round? round, ClassicalModelResult? result) => new(
        ClassicalModel.BinProbabilities, panel.Settings.CalibrationOvershoot, panel.Settings.CalibrationCutoff, result?.Cutoff,
        panel.Settings.CalibrationUsesFirstRound ? "first" : "final", round?.Number);
}
