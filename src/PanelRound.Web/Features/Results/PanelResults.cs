using System.Text.Json;
using PanelRound.Core.Statistics;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Results;

/// <summary>One round of one question-period, for the facilitator.</summary>
public sealed record RoundResult(
    int Round, bool Frozen, FeedbackView Feedback, ConvergenceAssessment Convergence, StabilityAssessment? Stability,
    IReadOnlyList<string> OutlierCodes);

public sealed record PeriodResult(string Period, IReadOnlyList<RoundResult> Rounds, StopSuggestion? Suggestion, ConsensusEntryDto? Consensus);

public sealed record QuestionResult(
    int QuestionId, string Label, ResponseFormat Format, string Unit, int Decimals, IReadOnlyList<SeriesPoint> Reference,
    IReadOnlyList<PeriodResult> Periods, StopReason Suggestion, string SuggestionText, IReadOnlyList<string> Rationales);

public sealed record PanelResultsView(int PanelId, string Title, PanelState State, PanelSettingsDto Settings, IReadOnlyList<QuestionResult> Questions);

/// <summary>
/// The facilitator's results per question: the distribution per round (frozen for closed rounds,
/// live for the open one), convergence and stability across rounds, outlier flags by panel code,
/// unattributed rationales and the statistics core's stop suggestion.
/// </summary>
public sealed class PanelResults(PanelRoundDbContext db)
{
    /// <summary>One read of a panel for the views computed from it (<see cref="PanelSnapshot"/>); null when it does not exist.</summary>
    public Task<PanelSnapshot?> SnapshotAsync(int panelId) => PanelSnapshot.LoadAsync(db, panelId);

    public async Task<PanelResultsView?> BuildAsync(int panelId) =>
        await PanelSnapshot.LoadAsync(db, panelId) is { } snapshot ? Build(snapshot) : null;

    /// <summary>The results of a panel already read.</summary>
    public static PanelResultsView Build(PanelSnapshot snapshot)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var panel = snapshot.Panel;
        var settings = FeedbackCalculator.SettingsOf(panel.Settings);
        var codes = snapshot.Codes;
        var rounds = snapshot.Rounds;
        // Each round's answers grouped once by question-period, so the loops below do no scans.
        var answersByRound = rounds.ToDictionary(r => r.Number, r => snapshot.AnswersOf(r).ToLookup(a => (a.QuestionId, a.Period)));
        var references = snapshot.References;
        var frozen = snapshot.Frozen.ToDictionary(f => (f.RoundId, f.QuestionId, f.Period));
        var consensus = snapshot.Consensus;

        var questions = new List<QuestionResult>();
        foreach (var q in panel.Questions.OrderBy(q => q.Order))
        {
            var periods = new List<PeriodResult>();
            foreach (var period in q.TargetPeriods.Split(','))
            {
                var list = new List<RoundResult>();
                RoundResult? previous = null;
                foreach (var r in rounds)
                {
                    var answers = answersByRound[r.Number][(q.Id, period)].ToList();
                    var isFrozen = frozen.TryGetValue((r.Id, q.Id, period), out var f);
                    var view = isFrozen ? FeedbackView.FromJson(f!.StatisticsJson) : FeedbackCalculator.Compute(q, period, answers, settings);
                    var convergence = Convergence.Assess(view.Headline?.RelativeIqr, previous?.Feedback.Headline?.RelativeIqr, view.N,
                        panel.Settings.ConsensusThreshold);
                    StabilityAssessment? stability = null;
                    if (r.Number > 1)
                    {
                        var before = answersByRound[r.Number - 1][(q.Id, period)].ToDictionary(a => a.MembershipId);
                        var pairs = answers.Where(a => before.ContainsKey(a.MembershipId))
                            .Select(a => new PairedAnswer(before[a.MembershipId].Headline, a.Headline)).ToList();
                        stability = Stability.Assess(pairs, panel.Settings.StabilityThreshold);
                    }
                    var result = new RoundResult(r.Number, isFrozen, view, convergence, stability, OutlierCodes(answers, settings, codes));
                    list.Add(result);
                    previous = result;
                }
                var last = list.LastOrDefault();
                var suggestion = last is null ? null : StopAdvice.Suggest(last.Convergence, last.Stability, last.Round, panel.Settings.RoundCap);
                periods.Add(new PeriodResult(period, list, suggestion, consensus.FirstOrDefault(c => c.QuestionId == q.Id && c.Period == period) is { } entry ? ConsensusEntryDto.From(entry) : null));
            }
            var stop = StopAdvice.ForQuestion([.. periods.Select(p => new PeriodStop(p.Period, p.Suggestion))]);
            var latestFrozen = rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
            var rationales = latestFrozen is null ? [] : q.TargetPeriods.Split(',')
                .Select(p => frozen.GetValueOrDefault((latestFrozen.Id, q.Id, p)))
                .Where(f => f is not null && !f.Withheld)
                .SelectMany(f => JsonSerializer.Deserialize<List<string>>(f!.RationalesJson) ?? []).Distinct().Order(StringComparer.Ordinal).ToList();
            var reference = references[q.IndicatorId].ToList();
            questions.Add(new QuestionResult(q.Id, q.Label, q.Format, q.Indicator!.UnitLabel, q.Indicator.Decimals, reference, periods, stop.Reason, stop.Explanation, rationales));
        }
        return new PanelResultsView(panel.Id, panel.Title, panel.State, PanelSettingsDto.From(panel.Settings), questions);
    }

    /// <summary>The panel codes whose answers the outlier rule excludes (staff only: codes, never names).</summary>
    private static IReadOnlyList<string> OutlierCodes(IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings, IReadOnlyDictionary<int, string> codes)
    {
        var usable = answers.Where(a => double.IsFinite(a.Headline)).ToList();
        var result = RoundFeedback.ForPoint(usable.Select(a => a.Headline).ToList(), settings);
        if (result.Feedback is not { } f)
        {
            return [];
        }
        return usable.Where((_, i) => f.IsOutlier[i]).Select(a => codes.GetValueOrDefault(a.MembershipId, "?")).Order(StringComparer.Ordinal).ToList();
    }
}
