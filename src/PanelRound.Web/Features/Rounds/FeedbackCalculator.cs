using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Rounds;

/// <summary>Computes round feedback through the statistics core, the one place that maps answers to statistics.</summary>
public static class FeedbackCalculator
{
    public static FeedbackSettings SettingsOf(PanelSettings s) => new()
    {
        Rule = s.OutlierRule switch
        {
            OutlierRuleSetting.SymmetricTrim => OutlierRule.SymmetricTrim,
            OutlierRuleSetting.ModifiedZScore => OutlierRule.ModifiedZScore,
            _ => OutlierRule.TukeyFences,
        },
        TrimFraction = s.TrimFraction,
        MinimumGroupSize = Math.Max(3, s.MinimumGroupSize),
    };

    /// <summary>The feedback of one question-period from the answers counted in a round (in any order).</summary>
    public static FeedbackView Compute(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        var view = ComputeStatistics(question, period, answers, settings);
        if (view.Withheld)
        {
            return view;
        }
        var shown = question.Format == ResponseFormat.Range
            ? AnonymousFeedback.ForRange(RangesOf(answers), settings)
            : AnonymousFeedback.ForPoint(PointsOf(answers), settings);
        return view with { Shown = shown };
    }

    private static List<RangeAnswer> RangesOf(IReadOnlyList<CountedAnswer> answers) =>
        answers.Where(a => a.P10.HasValue && a.P50.HasValue && a.P90.HasValue)
            .Select(a => new RangeAnswer(a.P10!.Value, a.P50!.Value, a.P90!.Value)).ToList();

    private static List<double> PointsOf(IReadOnlyList<CountedAnswer> answers) =>
        answers.Where(a => a.Value.HasValue).Select(a => a.Value!.Value).ToList();

    private static FeedbackView ComputeStatistics(Question question, string period, IReadOnlyList<CountedAnswer> answers, FeedbackSettings settings)
    {
        if (question.Format == ResponseFormat.Range)
        {
            var r = RoundFeedback.ForRange(RangesOf(answers), settings);
            return r.Feedback is { } f
                ? new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, false, null,
                    new RangeStatsView(StatsView.From(f.P10), StatsView.From(f.P50), StatsView.From(f.P90), f.AggregatedP10, f.AggregatedP50, f.AggregatedP90))
                : new FeedbackView(question.Id, period, r.N, r.MinimumGroupSize, true, null, null);
        }
        var p = RoundFeedback.ForPoint(PointsOf(answers), settings);
        return p.Feedback is { } pf
            ? new FeedbackView(question.Id, period, p.N, p.MinimumGroupSize, false, StatsView.From(pf), null)
            : new FeedbackView(question.Id, period, p.N, p.MinimumGroupSize, true, null, null);
    }

    /// <summary>The unattributed rationales of a question's answers: one per expert, in alphabetical order so order reveals nothing.</summary>
    public static IReadOnlyList<string> Rationales(IEnumerable<CountedAnswer> answersToQuestion) =>
        answersToQuestion.Where(a => !string.IsNullOrWhiteSpace(a.Rationale))
            .GroupBy(a => a.MembershipId).Select(g => g.First().Rationale!.Trim())
            .Distinct(StringComparer.Ordinal).Order(StringComparer.Ordinal).ToList();
}
