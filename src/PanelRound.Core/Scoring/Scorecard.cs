namespace PanelRound.Core.Scoring;

/// <summary>The direction of an expert's bias, in words.</summary>
public enum BiasDirection
{
    /// <summary>No systematic lean: |scaled mean error| below the threshold.</summary>
    Neutral,

    /// <summary>Forecasts tend to be too high (optimistic for prices and rents).</summary>
    OverForecasts,

    /// <summary>Forecasts tend to be too low.</summary>
    UnderForecasts,
}

/// <summary>Settings of the scorecard. Immutable; validated when set.</summary>
public sealed record ScorecardOptions
{
    /// <summary>The defaults: ranking from 3 scored forecasts, bias threshold 0.1.</summary>
    public static ScorecardOptions Default { get; } = new();

    /// <summary>
    /// The fewest final-round forecasts with a valid scale for an expert to be ranked; at least 1.
    /// Default 3: nobody is ranked on fewer than 3 scored forecasts.
    /// </summary>
    public int MinimumForRanking
    {
        get;
        init => field = Preconditions.CheckInRange(value, 1, int.MaxValue, nameof(MinimumForRanking));
    } = 3;

    /// <summary>
    /// The |scaled mean error| from which a bias direction is stated, in [0, 100]. Default 0.1:
    /// a lean of a tenth of the typical one-period change of the reference series.
    /// </summary>
    public double BiasThreshold
    {
        get;
        init => field = Preconditions.CheckInRange(value, 0, 100, nameof(BiasThreshold));
    } = 0.1;
}

/// <summary>One expert's line of the scorecard.</summary>
/// <param name="ExpertKey">The expert's key.</param>
/// <param name="Final">The summary of the expert's final-round items; its N is the number scored.</param>
/// <param name="FirstRound">Round-1 items on the question-periods where the expert also answered a later final round.</param>
/// <param name="FinalPaired">The final-round items on those same question-periods.</param>
/// <param name="FirstToFinalChange">FinalPaired.ScaledMae − FirstRound.ScaledMae: negative means the rounds improved the forecasts; null without paired scaled items.</param>
/// <param name="Ranked">True when <see cref="ErrorSummary.NScaled"/> of <paramref name="Final"/> is at least the ranking minimum.</param>
/// <param name="Rank">1 = lowest scaled MAE among the ranked; ties share a rank (1, 2, 2, 4); null when not ranked.</param>
/// <param name="Bias">The bias direction; null when no final-round item has a valid scale.</param>
public sealed record ExpertScore(
    string ExpertKey,
    ErrorSummary Final,
    ErrorSummary FirstRound,
    ErrorSummary FinalPaired,
    double? FirstToFinalChange,
    bool Ranked,
    int? Rank,
    BiasDirection? Bias);

/// <summary>The expert scorecard: per-expert summaries, ranking, bias direction and improvement through the rounds.</summary>
/// <remarks>
/// <para>Scored = final-round items (the round the consensus came from). Measures: see
/// <see cref="ErrorSummary"/> (Hyndman &amp; Koehler 2006; Gneiting &amp; Raftery 2007).</para>
/// <para>First to final: a question-period (panel, question, period) is paired when the
/// expert has a round-1 item and a final-round item of a round after 1 on it; single-round
/// panels carry no information about the feedback and are left out. The change compares the
/// scaled MAEs of the two sets, which share their scales.</para>
/// <para>Bias direction: from the scaled mean error m of the final-round items,
/// <see cref="BiasDirection.OverForecasts"/> when m ≥ threshold,
/// <see cref="BiasDirection.UnderForecasts"/> when m ≤ −threshold, else
/// <see cref="BiasDirection.Neutral"/>. Implementation note: a plain threshold in scaled units,
/// not a significance test, because n is small and the rule must read in one sentence; the n
/// beside it tells the reader how much it rests on.</para>
/// <para>Ranking: by final-round scaled MAE, ascending, among the experts with at least
/// <see cref="ScorecardOptions.MinimumForRanking"/> items with a valid scale (the n of the
/// figure they are ranked on). Output order: ranked experts by rank, then the rest, each by
/// expert key (ordinal).</para>
/// <para>An item set contains at most one item per expert, panel, question, period and round
/// (the latest answer of the round); duplicates throw <see cref="ArgumentException"/>.</para>
/// </remarks>
public static class Scorecard
{
    /// <summary>The per-expert scorecard of a set of scored items (all rounds).</summary>
    /// <param name="items">Scored items of every round; at most one per expert, panel, question, period and round.</param>
    /// <param name="options">Ranking minimum and bias threshold.</param>
    public static IReadOnlyList<ExpertScore> ForExperts(IReadOnlyList<ScoredItem> items, ScorecardOptions options)
    {
        ScoredItem.CheckItems(items, nameof(items));
        ArgumentNullException.ThrowIfNull(options);
        CheckNoDuplicates(items);

        var scores = new List<ExpertScore>();
        foreach (var group in items.GroupBy(i => i.ExpertKey, StringComparer.Ordinal))
        {
            var own = group.ToList();
            var final = own.Where(i => i.IsFinalRound).ToList();
            var laterFinal = new Dictionary<(string, string, string), ScoredItem>();
            foreach (var last in final.Where(i => i.Round > 1))
            {
                if (!laterFinal.TryAdd(TargetOf(last), last))
                {
                    throw new ArgumentException(
                        $"Expert '{group.Key}' has two final-round items for {last.PanelKey}/{last.QuestionKey}/{last.Period}.", nameof(items));
                }
            }

            var firstPaired = new List<ScoredItem>();
            var finalPaired = new List<ScoredItem>();
            foreach (var first in own.Where(i => i.Round == 1))
            {
                if (laterFinal.TryGetValue(TargetOf(first), out var last))
                {
                    firstPaired.Add(first);
                    finalPaired.Add(last);
                }
            }

            var finalSummary = ForecastErrors.Summarise(final);
            var firstSummary = ForecastErrors.Summarise(firstPaired);
            var finalPairedSummary = ForecastErrors.Summarise(finalPaired);
            double? change = finalPairedSummary.ScaledMae is { } after && firstSummary.ScaledMae is { } before ? after - before : null;
            var ranked = finalSummary.NScaled >= options.MinimumForRanking;
            scores.Add(new ExpertScore(
                group.Key, finalSummary, firstSummary, finalPairedSummary, change, ranked, null, BiasOf(finalSummary, options.BiasThreshold)));
        }

        var rankedScores = scores.Where(s => s.Ranked).OrderBy(s => s.Final.ScaledMae!.Value).ThenBy(s => s.ExpertKey, StringComparer.Ordinal).ToList();
        var result = new List<ExpertScore>(scores.Count);
        for (var i = 0; i < rankedScores.Count; i++)
        {
            var rank = i > 0 && rankedScores[i].Final.ScaledMae == rankedScores[i - 1].Final.ScaledMae ? result[i - 1].Rank : i + 1;
            result.Add(rankedScores[i] with { Rank = rank });
        }

        result.AddRange(scores.Where(s => !s.Ranked).OrderBy(s => s.ExpertKey, StringComparer.Ordinal));
        return result;
    }

    /// <summary>The panel's consensus scored like a virtual expert: the summary of its final-round items.</summary>
    /// <param name="consensusItems">Items whose forecast is the consensus (ExpertKey <c>"consensus"</c> by convention); only final-round items count.</param>
    /// <remarks>Measures: see <see cref="ErrorSummary"/>.</remarks>
    public static ErrorSummary ForConsensus(IReadOnlyList<ScoredItem> consensusItems)
    {
        ScoredItem.CheckItems(consensusItems, nameof(consensusItems));
        return ForecastErrors.Summarise([.. consensusItems.Where(i => i.IsFinalRound)]);
    }

    /// <summary>
    /// The naive no-change forecast scored like an expert: one point item per distinct
    /// question-period (panel, question, period) among the final-round items that have a naive forecast.
    /// </summary>
    /// <param name="items">Scored items (any experts); the first final-round item of each question-period supplies its outcome, scale and naive forecast.</param>
    /// <remarks>Its <see cref="ErrorSummary.Mae"/> is the naive MAE of those question-periods, and its skill is 0 by construction.</remarks>
    public static ErrorSummary ForNaiveBaseline(IReadOnlyList<ScoredItem> items)
    {
        ScoredItem.CheckItems(items, nameof(items));
        var seen = new HashSet<(string, string, string)>();
        var naive = new List<ScoredItem>();
        foreach (var item in items)
        {
            if (item.IsFinalRound && item.HasNaiveForecast && seen.Add(TargetOf(item)))
            {
                naive.Add(item with { ExpertKey = "naive", Value = item.NaiveForecast, P10 = null, P50 = null, P90 = null });
            }
        }

        return ForecastErrors.Summarise(naive);
    }

    internal static (string Panel, string Question, string Period) TargetOf(ScoredItem item) => (item.PanelKey, item.QuestionKey, item.Period);

    private static BiasDirection? BiasOf(ErrorSummary summary, double threshold) => summary.ScaledMeanError switch
    {
        null => null,
        { } m when m >= threshold && m > 0 => BiasDirection.OverForecasts,
        { } m when m <= -threshold && m < 0 => BiasDirection.UnderForecasts,
        _ => BiasDirection.Neutral,
    };

    private static void CheckNoDuplicates(IReadOnlyList<ScoredItem> items)
    {
        var seen = new HashSet<(string, string, string, string, int)>();
        foreach (var item in items)
        {
            if (!seen.Add((item.ExpertKey, item.PanelKey, item.QuestionKey, item.Period, item.Round)))
            {
                throw new ArgumentException(
                    $"Expert '{item.ExpertKey}' has two items for {item.PanelKey}/{item.QuestionKey}/{item.Period} in round {item.Round}; pass the latest answer of the round only.",
                    nameof(items));
            }
        }
    }
}
