using System.Text.Json;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Rounds;

/// <summary>
/// Freezes a closed round's feedback: for every question-period, the statistics of the answers
/// that count (<see cref="FeedbackCalculator"/>) and, when the panel shows them and enough
/// answers arrived, the unattributed rationales. The one place that writes round feedback, for
/// rounds closed in the app and rounds of imported past panels alike; the caller saves.
/// </summary>
public static class FeedbackFreezer
{
    /// <summary>Adds the frozen feedback of every target period of every question to the unit of work.</summary>
    /// <param name="db">The unit of work.</param>
    /// <param name="roundId">The closed round.</param>
    /// <param name="questions">The panel's questions.</param>
    /// <param name="answers">The answers that count in the round (<see cref="CountedAnswers.LoadAsync"/>).</param>
    /// <param name="panelSettings">The panel's settings: outlier rule, trim, minimum group size, whether rationales are shown.</param>
    public static void Freeze(PanelRoundDbContext db, int roundId, IEnumerable<Question> questions, IReadOnlyList<CountedAnswer> answers, PanelSettings panelSettings)
    {
        var settings = FeedbackCalculator.SettingsOf(panelSettings);
        foreach (var q in questions)
        {
            var toQuestion = answers.Where(a => a.QuestionId == q.Id).ToList();
            foreach (var period in q.TargetPeriods.Split(','))
            {
                var forPeriod = toQuestion.Where(a => a.Period == period).ToList();
                var view = FeedbackCalculator.Compute(q, period, forPeriod, settings);
                var rationales = view.Withheld || !panelSettings.ShowRationales ? [] : FeedbackCalculator.Rationales(toQuestion);
                db.FrozenFeedback.Add(new FrozenFeedback
                {
                    RoundId = roundId, QuestionId = q.Id, Period = period, N = view.N, Withheld = view.Withheld,
                    StatisticsJson = view.ToJson(), RationalesJson = JsonSerializer.Serialize(rationales),
                });
            }
        }
    }
}
