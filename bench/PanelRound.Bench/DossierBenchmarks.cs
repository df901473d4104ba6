using BenchmarkDotNet.Attributes;
using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Reports;

namespace PanelRound.Bench;

/// <summary>
/// The dossier of a large panel: 30 experts, 20 questions x 5 periods, 3 rounds (goal: under 5 s).
/// Invented answers, computed through the product's own feedback code; only rendering is timed.
/// </summary>
[MemoryDiagnoser]
public class DossierBenchmarks
{
    private PanelDossier.DossierData _data = null!;

    [GlobalSetup]
    public void Setup()
    {
        _data = LargePanel.Build(experts: 30, questions: 20, periods: 5, rounds: 3, seed: 7);
        Console.WriteLine($"// dossier size: {PanelDossier.Render(_data).Length:N0} bytes");
    }

    [Benchmark]
    public int RenderDossier() => PanelDossier.Render(_data).Length;
}

/// <summary>An invented panel of any size, as the dossier sees it.</summary>
public static class LargePanel
{
    public static PanelDossier.DossierData Build(int experts, int questions, int periods, int rounds, int seed)
    {
        var random = new Random(seed);
        var years = Enumerable.Range(2027, periods).Select(y => y.ToString(System.Globalization.CultureInfo.InvariantCulture)).ToList();
        var panel = new Panel { Id = 1, Title = "Large invented panel", StartsOn = new DateOnly(2026, 11, 2), TargetPeriods = string.Join(",", years), State = PanelState.Concluded, ConcludedAt = new DateTime(2027, 2, 1, 12, 0, 0, DateTimeKind.Utc) };
        var roundList = Enumerable.Range(1, rounds).Select(n => new Round { Id = n, PanelId = 1, Number = n, State = RoundState.Closed, OpensAt = new DateTime(2026, 11, 2 + (7 * (n - 1)), 9, 0, 0, DateTimeKind.Utc), ClosesAt = new DateTime(2026, 11, 8 + (7 * (n - 1)), 17, 0, 0, DateTimeKind.Utc), ClosedAt = new DateTime(2026, 11, 8 + (7 * (n - 1)), 17, 0, 0, DateTimeKind.Utc) }).ToList();
        var settings = FeedbackCalculator.SettingsOf(panel.Settings);
        var results = new List<QuestionResult>();
        for (var q = 1; q <= questions; q++)
        {
            var question = new Question { Id = q, Label = $"Invented indicator {q}", Format = q % 4 == 0 ? ResponseFormat.Range : ResponseFormat.Point, TargetPeriods = panel.TargetPeriods };
            var level = 1000 + (random.NextDouble() * 4000);
            var reference = Enumerable.Range(2012, 14).Select(y => new SeriesPoint(y.ToString(System.Globalization.CultureInfo.InvariantCulture), level * (0.7 + (0.02 * (y - 2012))))).ToList();
            var periodResults = new List<PeriodResult>();
            foreach (var period in years)
            {
                var list = new List<RoundResult>();
                List<CountedAnswer>? before = null;
                for (var r = 1; r <= rounds; r++)
                {
                    var answers = Enumerable.Range(0, experts).Select(e =>
                    {
                        var v = level * (1 + (0.1 * (random.NextDouble() - 0.5) / r));
                        return question.Format == ResponseFormat.Range
                            ? new CountedAnswer(e, q, period, null, v * 0.9, v, v * 1.1, $"Invented rationale {e} for question {q}.")
                            : new CountedAnswer(e, q, period, v, null, null, null, $"Invented rationale {e} for question {q}.");
                    }).ToList();
                    var view = FeedbackCalculator.Compute(question, period, answers, settings);
                    var convergence = Convergence.Assess(view.Headline?.RelativeIqr, list.LastOrDefault()?.Feedback.Headline?.RelativeIqr, view.N, panel.Settings.ConsensusThreshold);
                    var stability = before is null ? null : Stability.Assess(answers.Zip(before).Select(p => new PairedAnswer(p.Second.Headline, p.First.Headline)).ToList(), panel.Settings.StabilityThreshold);
                    list.Add(new RoundResult(r, true, view, convergence, stability, []));
                    before = answers;
                }
                var h = list[^1].Feedback.Headline!;
                var consensus = new ConsensusEntry { PanelId = 1, QuestionId = q, Period = period, Value = h.TrimmedMedian, Low = h.Q1, High = h.Q3, N = experts, Method = "TrimmedMedian", PublishedAt = panel.ConcludedAt!.Value };
                periodResults.Add(new PeriodResult(period, list, StopAdvice.Suggest(list[^1].Convergence, list[^1].Stability, rounds, panel.Settings.RoundCap), ConsensusEntryDto.From(consensus)));
            }
            var rationales = Enumerable.Range(0, experts).Select(e => $"Invented rationale {e} for question {q}: a sentence long enough to wrap onto a second line of the dossier's text.").ToList();
            results.Add(new QuestionResult(q, question.Label, question.Format, "EUR/m²", 0, reference, periodResults, Core.Statistics.StopReason.Stable, "Stable.", rationales));
        }
        var view2 = new PanelResultsView(1, panel.Title, panel.State, PanelRound.Web.Features.Panels.PanelSettingsDto.From(panel.Settings), results);
        var audit = roundList.SelectMany(r => new[]
        {
            new AuditEvent { Id = (r.Number * 2) - 1, At = r.OpensAt, Actor = "facilitator@invented.example", Action = "round.opened", EntityType = "Round", EntityId = r.Id.ToString(System.Globalization.CultureInfo.InvariantCulture), PanelId = 1 },
            new AuditEvent { Id = r.Number * 2, At = r.ClosedAt!.Value, Actor = "system:deadline", Action = "round.closed", EntityType = "Round", EntityId = r.Id.ToString(System.Globalization.CultureInfo.InvariantCulture), PanelId = 1 },
        }).ToList();
        return new PanelDossier.DossierData(panel, view2, roundList, experts, roundList.ToDictionary(r => r.Id, _ => experts), audit,
            Enumerable.Range(0, experts).Select(e => e % 5 == 0 ? $"Invented interest {e}" : null).ToList(), new DateTime(2027, 2, 2, 9, 0, 0, DateTimeKind.Utc));
    }
}
