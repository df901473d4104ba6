using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Calibration;

/// <summary>A panel's calibration questions and the answers they are scored on, ready for the core's classical model.</summary>
/// <param name="Panel">The panel, with its questions and rounds.</param>
/// <param name="Round">The round whose answers are scored (the final closed round, or round 1 by the panel's setting); null before it has closed.</param>
/// <param name="Questions">The calibration questions, in order.</param>
/// <param name="Codes">Panel code by membership id.</param>
/// <param name="Items">The calibration questions whose true value is recorded (key <c>q{id}</c>).</param>
/// <param name="Assessments">The counted answers to those questions in the round, by panel code.</param>
/// <param name="AnswerCounts">The number of counted answers per calibration question id.</param>
public sealed record CalibrationData(
    Panel Panel, Round? Round, IReadOnlyList<Question> Questions, IReadOnlyDictionary<int, string> Codes,
    IReadOnlyList<CalibrationItem> Items, IReadOnlyList<CalibrationAssessment> Assessments, IReadOnlyDictionary<int, int> AnswerCounts)
{
    /// <summary>The core's settings from the panel's.</summary>
    public CalibrationSettings Settings => SettingsOf(Panel.Settings);

    public static CalibrationSettings SettingsOf(PanelSettings s) => new(s.CalibrationOvershoot, s.CalibrationCutoff);

    /// <summary>Results of the classical model by their whole input (settings, truths, assessments in order): it is pure and costs tens of milliseconds.</summary>
    private static readonly InputKeyedCache<ClassicalModelResult> Evaluated = new(256);

    /// <summary>The classical model on the recorded truths; null when nothing can be scored yet.</summary>
    public ClassicalModelResult? Evaluate()
    {
        if (Items.Count == 0 || Assessments.Count == 0)
        {
            return null;
        }
        var settings = Settings;
        var items = string.Join(';', Items.Select(i => string.Create(CultureInfo.InvariantCulture, $"{i.Key},{i.Truth:R},{i.Background}")));
        var assessments = string.Join(';', Assessments.Select(a =>
            string.Create(CultureInfo.InvariantCulture, $"{a.ExpertKey},{a.ItemKey},{a.Answer.P10:R},{a.Answer.P50:R},{a.Answer.P90:R}")));
        var key = string.Create(CultureInfo.InvariantCulture, $"{settings.Overshoot:R}|{settings.Cutoff:R}|{items}|{assessments}");
        return Evaluated.GetOrAdd(key, () => ClassicalModel.Evaluate(Items, Assessments, settings));
    }
}

/// <summary>
/// Loads a panel's calibration questions, their true values and the experts' answers to them
/// (the answers that count, <see cref="CountedAnswers"/>), for the classical model of the core
/// (<see cref="ClassicalModel"/>). Only the staff-facing features use it.
/// </summary>
public static class CalibrationScoring
{
    /// <summary>The key of a calibration question in the core's items.</summary>
    public static string KeyOf(int questionId) => string.Create(CultureInfo.InvariantCulture, $"q{questionId}");

    /// <summary>
    /// The round a panel's calibration questions are scored on: round 1 when the panel's setting
    /// says so, else <paramref name="final"/> (the round a consensus is computed from) or the last
    /// closed round; null when that round has not closed.
    /// </summary>
    public static Round? ScoringRound(Panel panel, Round? final = null)
    {
        var closed = panel.Rounds.Where(r => r.State == RoundState.Closed).OrderBy(r => r.Number).ToList();
        return panel.Settings.CalibrationUsesFirstRound ? closed.FirstOrDefault(r => r.Number == 1) : final ?? closed.LastOrDefault();
    }

    /// <summary>Loads the data of a panel (loaded with its questions and rounds).</summary>
    public static async Task<CalibrationData> LoadAsync(PanelRoundDbContext db, Panel panel, Round? final = null)
    {
        var questions = panel.Questions.Where(q => q.IsCalibration).OrderBy(q => q.Order).ToList();
        var round = ScoringRound(panel, final);
        var codes = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panel.Id).ToDictionaryAsync(m => m.Id, m => m.PanelCode);
        var answers = questions.Count == 0 || round is null ? [] : await CountedAnswers.LoadAsync(db, round.Id);
        return Build(panel, round, questions, codes, answers);
    }

    /// <summary>The data of a panel already read (see <see cref="LoadAsync"/>).</summary>
    public static CalibrationData Of(PanelSnapshot snapshot, Round? final = null)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var panel = snapshot.Panel;
        var questions = panel.Questions.Where(q => q.IsCalibration).OrderBy(q => q.Order).ToList();
        var round = ScoringRound(panel, final);
        return Build(panel, round, questions, snapshot.Codes, questions.Count == 0 || round is null ? [] : snapshot.AnswersOf(round));
    }

    private static CalibrationData Build(
        Panel panel, Round? round, List<Question> questions, IReadOnlyDictionary<int, string> codes, IReadOnlyList<CountedAnswer> answers)
    {
        var byQuestion = questions.ToDictionary(q => q.Id);
        var usable = answers
            .Where(a => byQuestion.TryGetValue(a.QuestionId, out var q) && a.Period == q.TargetPeriods && codes.ContainsKey(a.MembershipId))
            .Select(a => (Answer: a, Range: RangeAnswer.TryCreate(a.P10 ?? double.NaN, a.P50 ?? double.NaN, a.P90 ?? double.NaN).Answer))
            .Where(x => x.Range is not null)
            .ToList();
        var items = questions.Where(q => q.TrueValue is not null)
            .Select(q => new CalibrationItem(KeyOf(q.Id), q.TrueValue!.Value, q.LogScale ? BackgroundMeasure.LogUniform : BackgroundMeasure.Uniform))
            .ToList();
        var known = items.Select(i => i.Key).ToHashSet(StringComparer.Ordinal);
        var assessments = usable.Where(x => known.Contains(KeyOf(x.Answer.QuestionId)))
            .Select(x => new CalibrationAssessment(codes[x.Answer.MembershipId], KeyOf(x.Answer.QuestionId), x.Range!))
            .ToList();
        var counts = questions.ToDictionary(q => q.Id, q => usable.Count(x => x.Answer.QuestionId == q.Id));
        return new CalibrationData(panel, round, questions, codes, items, assessments, counts);
    }

    /// <summary>
    /// The calibration-question weights of a panel's memberships (normalised, by membership id)
    /// for a consensus computed from <paramref name="final"/>; null when no expert has a positive
    /// weight (no true value recorded, no answers, or nobody above a fixed cut-off).
    /// </summary>
    public static async Task<IReadOnlyDictionary<int, double>?> MembershipWeightsAsync(PanelRoundDbContext db, Panel panel, Round final) =>
        MembershipWeights(await LoadAsync(db, panel, final));

    /// <summary>The calibration-question weights of loaded data (see <see cref="MembershipWeightsAsync"/>).</summary>
    public static IReadOnlyDictionary<int, double>? MembershipWeights(CalibrationData data)
    {
        ArgumentNullException.ThrowIfNull(data);
        if (data.Evaluate()?.Weights is not { } weights)
        {
            return null;
        }
        return data.Codes.ToDictionary(c => c.Key, c => weights.GetValueOrDefault(c.Value, 0));
    }
}
