namespace PanelRound.Core.Scoring;

/// <summary>Which pooled scaled error a track record is measured by.</summary>
public enum TrackRecordMeasure
{
    /// <summary>The scaled absolute error |e| / s of every scored item (point panels).</summary>
    ScaledAbsoluteError,

    /// <summary>The scaled interval score of [P10, P90] at α = 0.2, over range items only (range panels).</summary>
    ScaledIntervalScore,
}

/// <summary>An expert's track record: the number of scored forecasts and their mean scaled error.</summary>
/// <param name="ExpertKey">The expert's key.</param>
/// <param name="N">The number of scored forecasts, 0 or more (0 counts as no record).</param>
/// <param name="PooledScaledError">Their mean scaled error, finite and non-negative (ignored when N = 0).</param>
public sealed record ExpertRecord(string ExpertKey, int N, double PooledScaledError);

/// <summary>One expert's weight in a weight set.</summary>
/// <param name="ExpertKey">The expert's key.</param>
/// <param name="N">The number of scored forecasts behind it (0 = no record).</param>
/// <param name="PooledScaledError">The expert's own mean scaled error; null without a record.</param>
/// <param name="ShrunkError">The error after shrinkage towards the pool mean (and the floor).</param>
/// <param name="Weight">The normalised weight, positive; the panel's weights sum to 1.</param>
public sealed record ExpertWeight(string ExpertKey, int N, double? PooledScaledError, double ShrunkError, double Weight)
{
    /// <summary>True when the expert had scored forecasts.</summary>
    public bool HasRecord => N > 0;
}

/// <summary>The track-record weights of a panel's experts.</summary>
/// <param name="Experts">One entry per panel expert, in the order the panel lists them.</param>
/// <param name="PoolMeanError">ē, the n-weighted mean scaled error of every record; null when no record has N &gt; 0 (weights are then equal).</param>
/// <param name="PoolN">Σ n over every record.</param>
/// <param name="PseudoForecasts">k, the shrinkage strength used.</param>
public sealed record WeightSet(IReadOnlyList<ExpertWeight> Experts, double? PoolMeanError, int PoolN, double PseudoForecasts)
{
    /// <summary>The weights in panel order, ready for <see cref="Statistics.Consensus"/>.</summary>
    public IReadOnlyList<double> Weights => [.. Experts.Select(e => e.Weight)];

    /// <summary>The weight of one expert; throws <see cref="KeyNotFoundException"/> when not on the panel.</summary>
    public double WeightOf(string expertKey) =>
        Experts.FirstOrDefault(e => string.Equals(e.ExpertKey, expertKey, StringComparison.Ordinal))?.Weight
        ?? throw new KeyNotFoundException($"Expert '{expertKey}' is not on the panel.");

    /// <summary>True when both sets list the same experts with exactly the same numbers.</summary>
    public bool SameAs(WeightSet other)
    {
        ArgumentNullException.ThrowIfNull(other);
        return PoolMeanError == other.PoolMeanError && PoolN == other.PoolN
            && PseudoForecasts == other.PseudoForecasts && Experts.SequenceEqual(other.Experts);
    }
}

/// <summary>
/// Track-record weights: each expert's pooled scaled error, shrunk towards the pool mean by
/// the number of scored forecasts, inverted and normalised over a panel's experts.
/// </summary>
/// <remarks>
/// <para>Pool mean ē = Σ n_i·e_i / Σ n_i over every record passed (not only the panel's
/// experts): the mean over all scored items of all experts. Shrunk error
/// ẽ_i = (n_i·e_i + k·ē) / (n_i + k), the posterior-mean form of a credibility estimate with k
/// pseudo-forecasts at the pool mean, so that one lucky forecast buys little weight. Weight
/// w_i ∝ 1 / ẽ_i, normalised to sum to 1 over the panel's experts.</para>
/// <para>An expert with no record (absent, or N = 0) gets ẽ = ē: the formula at n = 0, i.e. the
/// weight of an expert whose record equals the pool average.</para>
/// <para>Floor: ẽ_i is raised to at least 10⁻⁶·ē, so a perfect record at k = 0 gives at most a
/// million times the pool-average weight rather than a division by zero. When there is no
/// record at all, or ē = 0 (every record perfect), the weights are equal.</para>
/// </remarks>
public static class TrackRecordWeights
{
    /// <summary>The default k: shrinkage with 5 pseudo-forecasts at the pool mean.</summary>
    public const double DefaultPseudoForecasts = 5;

    /// <summary>The floor on the shrunk error, as a fraction of the pool mean.</summary>
    public const double ErrorFloorFraction = 1e-6;

    /// <summary>Computes the weights of the panel's experts from the track records.</summary>
    /// <param name="records">The records, at most one per expert key; N ≥ 0, errors finite and ≥ 0.</param>
    /// <param name="panelExperts">The panel's experts, distinct keys; may be empty (an empty set).</param>
    /// <param name="pseudoForecasts">k ≥ 0, finite. Default 5.</param>
    /// <remarks>Formula, pool mean, no-record rule and floor: see the type's remarks.</remarks>
    public static WeightSet Compute(IReadOnlyList<ExpertRecord> records, IReadOnlyList<string> panelExperts, double pseudoForecasts = DefaultPseudoForecasts)
    {
        ArgumentNullException.ThrowIfNull(records);
        ArgumentNullException.ThrowIfNull(panelExperts);
        Preconditions.CheckInRange(pseudoForecasts, 0, double.MaxValue);
        var byKey = new Dictionary<string, ExpertRecord>(StringComparer.Ordinal);
        long poolN = 0;
        var poolSum = 0.0;
        foreach (var record in records)
        {
            ArgumentNullException.ThrowIfNull(record, nameof(records));
            ArgumentNullException.ThrowIfNull(record.ExpertKey, nameof(records));
            if (record.N < 0)
            {
                throw new ArgumentException($"Record '{record.ExpertKey}' has N = {record.N}; N must not be negative.", nameof(records));
            }

            if (record.N > 0 && (!double.IsFinite(record.PooledScaledError) || record.PooledScaledError < 0))
            {
                throw new ArgumentException(
                    $"Record '{record.ExpertKey}' has error {record.PooledScaledError}; errors must be finite and non-negative.", nameof(records));
            }

            if (!byKey.TryAdd(record.ExpertKey, record))
            {
                throw new ArgumentException($"Expert '{record.ExpertKey}' has more than one record.", nameof(records));
            }

            if (record.N > 0)
            {
                poolN += record.N;
                poolSum += record.N * record.PooledScaledError;
            }
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var key in panelExperts)
        {
            ArgumentNullException.ThrowIfNull(key, nameof(panelExperts));
            if (!seen.Add(key))
            {
                throw new ArgumentException($"Expert '{key}' is listed twice on the panel.", nameof(panelExperts));
            }
        }

        double? poolMean = poolN > 0 ? poolSum / poolN : null;
        var entries = new (string Key, int N, double? Own, double Shrunk)[panelExperts.Count];
        for (var i = 0; i < panelExperts.Count; i++)
        {
            var key = panelExperts[i];
            if (byKey.TryGetValue(key, out var r) && r.N > 0)
            {
                var shrunk = ((r.N * r.PooledScaledError) + (pseudoForecasts * poolMean!.Value)) / (r.N + pseudoForecasts);
                entries[i] = (key, r.N, r.PooledScaledError, shrunk);
            }
            else
            {
                entries[i] = (key, 0, null, poolMean ?? double.NaN);
            }
        }

        var equal = poolMean is not > 0;
        var floor = equal ? 0 : ErrorFloorFraction * poolMean!.Value;
        var inverse = new double[entries.Length];
        var total = 0.0;
        for (var i = 0; i < entries.Length; i++)
        {
            if (!equal)
            {
                entries[i].Shrunk = Math.Max(entries[i].Shrunk, floor);
                inverse[i] = 1 / entries[i].Shrunk;
            }
            else
            {
                inverse[i] = 1;
            }

            total += inverse[i];
        }

        var experts = new ExpertWeight[entries.Length];
        for (var i = 0; i < entries.Length; i++)
        {
            experts[i] = new ExpertWeight(entries[i].Key, entries[i].N, entries[i].Own, entries[i].Shrunk, inverse[i] / total);
        }

        return new WeightSet(experts, poolMean, (int)Math.Min(poolN, int.MaxValue), pseudoForecasts);
    }

    /// <summary>
    /// The track records in a set of scored items: per expert, the number of final-round items
    /// that qualify for the measure and their mean scaled error. Ordered by expert key.
    /// </summary>
    /// <param name="items">Scored items; only final-round items with a valid scale count.</param>
    /// <param name="measure">Scaled absolute error (every item) or scaled interval score (range items only).</param>
    /// <remarks>
    /// The pooled scaled error of an expert is the mean over their qualifying items of |e| / s
    /// (Hyndman &amp; Koehler 2006, section 3.4) or of the interval score of [P10, P90] at α = 0.2
    /// divided by s (Gneiting &amp; Raftery 2007, eq. 43). Experts without a qualifying item get no record.
    /// </remarks>
    public static IReadOnlyList<ExpertRecord> Records(IReadOnlyList<ScoredItem> items, TrackRecordMeasure measure)
    {
        ScoredItem.CheckItems(items, nameof(items));
        if (!Enum.IsDefined(measure))
        {
            throw new ArgumentOutOfRangeException(nameof(measure), measure, "Unknown measure.");
        }

        var sums = new SortedDictionary<string, (int N, double Sum)>(StringComparer.Ordinal);
        foreach (var item in items)
        {
            if (!item.IsFinalRound || !item.HasScale)
            {
                continue;
            }

            double error;
            if (measure == TrackRecordMeasure.ScaledAbsoluteError)
            {
                error = Math.Abs(item.Error) / item.Scale;
            }
            else if (item is { P10: { } p10, P90: { } p90 })
            {
                error = ForecastErrors.IntervalScore(p10, p90, ForecastErrors.RangeIntervalAlpha, item.Outcome) / item.Scale;
            }
            else
            {
                continue;
            }

            sums.TryGetValue(item.ExpertKey, out var acc);
            sums[item.ExpertKey] = (acc.N + 1, acc.Sum + error);
        }

        return [.. sums.Select(kv => new ExpertRecord(kv.Key, kv.Value.N, kv.Value.Sum / kv.Value.N))];
    }
}
