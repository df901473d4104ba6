using PanelRound.Core.Scoring;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Scorecard;

namespace PanelRound.Web.Features.Benchmarks;

/// <summary>
/// The benchmark forecasts of the concluded panels as scored items, one virtual expert per method
/// (expert key <c>benchmark:&lt;method&gt;</c>): each question's benchmarks from its reference series before the
/// panel's start, set against the same outcomes, scales and naive forecasts as the experts' items. A Range
/// question's benchmark item is its P10 / point / P90, so it is scored with the interval score too.
/// </summary>
public sealed class BenchmarkScoring(PanelRoundDbContext db)
{
    public const string KeyPrefix = "benchmark:";

    public async Task<IReadOnlyList<ScoredItem>> ItemsAsync(ScoringData data)
    {
        var items = new List<ScoredItem>();
        foreach (var panel in data.Panels.Values.OrderBy(p => p.Key, StringComparer.Ordinal))
        {
            var references = await IndicatorCatalog.ReferenceSeriesAsync(db, panel.Questions.Select(q => q.IndicatorId).Distinct().ToList(), panel.StartsOn);
            foreach (var q in panel.Questions)
            {
                var benchmarks = PanelBenchmarks.ForQuestion(references[q.IndicatorId].ToList(), q.Periods, panel.Settings.BenchmarkWindow);
                foreach (var b in benchmarks.Where(b => b.Available))
                {
                    foreach (var point in b.Path)
                    {
                        if (!data.Outcomes.TryGetValue((q.IndicatorId, point.Period), out var outcome))
                        {
                            continue;
                        }
                        var range = q.Format == ResponseFormat.Range;
                        items.Add(new ScoredItem
                        {
                            ExpertKey = KeyPrefix + b.Method,
                            QuestionKey = q.Key,
                            PanelKey = panel.Key,
                            Period = point.Period,
                            Round = panel.FinalRound,
                            IsFinalRound = true,
                            Value = range ? null : point.Value,
                            P10 = range ? point.P10 : null,
                            P50 = range ? point.Value : null,
                            P90 = range ? point.P90 : null,
                            Outcome = outcome.Value,
                            Scale = q.Scale.Value,
                            NaiveForecast = q.NaiveForecast ?? double.NaN,
                            PanelClosedOn = panel.ClosedOn,
                            OutcomeKnownOn = outcome.KnownOn,
                        });
                    }
                }
            }
        }
        return items;
    }
}
