namespace PanelRound.Core.Scoring;

/// <summary>One benchmark scored like an expert.</summary>
/// <param name="Key">The benchmark's expert key, e.g. <c>benchmark:damped</c>.</param>
/// <param name="Summary">The summary of its items (final round by construction).</param>
/// <param name="ComparedScaledMae">Its scaled MAE on the consensus's scaled question-periods; null unless it covers every one of them.</param>
public sealed record BenchmarkScore(string Key, ErrorSummary Summary, double? ComparedScaledMae);

/// <summary>The consensus against the benchmarks on the same question-periods.</summary>
/// <param name="Benchmarks">Every benchmark, by key (ordinal).</param>
/// <param name="N">The number of question-periods compared: the consensus's final-round items with a valid scale.</param>
/// <param name="ConsensusScaledMae">The consensus's scaled MAE on them.</param>
/// <param name="Best">The key of the benchmark with the lowest scaled MAE on them, among those covering all; null when none does.</param>
/// <param name="BestScaledMae">Its scaled MAE.</param>
/// <param name="SkillVsBest">1 − ConsensusScaledMae / BestScaledMae; null without a best benchmark or when its MAE is 0.</param>
public sealed record BenchmarkComparison(
    IReadOnlyList<BenchmarkScore> Benchmarks, int N, double? ConsensusScaledMae, string? Best, double? BestScaledMae, double? SkillVsBest);

/// <summary>Scores benchmark forecasts exactly like experts and compares the consensus with the best of them.</summary>
/// <remarks>
/// <para>Each benchmark's items are scored by <see cref="ForecastErrors.Summarise"/>, as an expert's. The
/// comparison set is the consensus's final-round items with a valid scale (one per panel, question and
/// period). A benchmark takes part only when it has a scaled item on every question-period of that set
/// (a method unavailable on a short series would otherwise be compared on easier ground). Skill is the
/// relative reduction in scaled MAE, 1 − MASE_consensus / MASE_best, the form of the skill score against
/// the naive forecast in <see cref="ErrorSummary.ScaledSkill"/> (Hyndman &amp; Koehler 2006, section 3.4, for the scaling).</para>
/// </remarks>
public static class BenchmarkSkill
{
    /// <summary>Compares the consensus with the benchmarks; see the type's remarks.</summary>
    /// <param name="consensusItems">The consensus's items; only final-round items count.</param>
    /// <param name="benchmarkItems">The benchmarks' items, one per benchmark key, panel, question and period.</param>
    public static BenchmarkComparison Compare(IReadOnlyList<ScoredItem> consensusItems, IReadOnlyList<ScoredItem> benchmarkItems)
    {
        ScoredItem.CheckItems(consensusItems, nameof(consensusItems));
        ScoredItem.CheckItems(benchmarkItems, nameof(benchmarkItems));
        var compared = consensusItems.Where(i => i.IsFinalRound && i.HasScale).ToList();
        var targets = compared.Select(Scorecard.TargetOf).ToHashSet();
        double? consensusMase = compared.Count == 0 ? null : compared.Average(i => Math.Abs(i.Error) / i.Scale);
        var scores = new List<BenchmarkScore>();
        foreach (var group in benchmarkItems.GroupBy(i => i.ExpertKey, StringComparer.Ordinal).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            var byTarget = new Dictionary<(string, string, string), ScoredItem>();
            foreach (var item in group)
            {
                if (!byTarget.TryAdd(Scorecard.TargetOf(item), item))
                {
                    throw new ArgumentException($"Benchmark '{group.Key}' has two items for {item.PanelKey}/{item.QuestionKey}/{item.Period}.", nameof(benchmarkItems));
                }
            }

            var covers = targets.Count > 0 && targets.All(t => byTarget.TryGetValue(t, out var b) && b.HasScale);
            double? mase = covers ? targets.Average(t => Math.Abs(byTarget[t].Error) / byTarget[t].Scale) : null;
            scores.Add(new BenchmarkScore(group.Key, ForecastErrors.Summarise(group.ToList()), mase));
        }

        var best = scores.Where(s => s.ComparedScaledMae is not null).OrderBy(s => s.ComparedScaledMae).ThenBy(s => s.Key, StringComparer.Ordinal).FirstOrDefault();
        double? skill = best?.ComparedScaledMae is { } b2 && b2 > 0 && consensusMase is { } c ? 1 - (c / b2) : null;
        return new BenchmarkComparison(scores, compared.Count, consensusMase, best?.Key, best?.ComparedScaledMae, skill);
    }
}
