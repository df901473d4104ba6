namespace PanelRound.Core.Scoring;

/// <summary>
/// One forecast set against its outcome: an expert's (or the consensus's) answer to one
/// question-period in one round, with what is needed to score it.
/// </summary>
/// <remarks>
/// <para>Exactly one forecast form is given: a point <see cref="Value"/>, or a range
/// <see cref="P10"/> ≤ <see cref="P50"/> ≤ <see cref="P90"/>. For a range the point used by MAE,
/// mean error, RMSE, MAPE and the scaled errors is <see cref="P50"/>. The scoring functions check
/// the form and throw <see cref="ArgumentException"/> on a malformed item (a programming error);
/// every number that is set must be finite, except <see cref="Scale"/> and
/// <see cref="NaiveForecast"/>, which are NaN when unavailable.</para>
/// <para>Error = forecast − outcome, so a positive error is an over-forecast.</para>
/// <para><see cref="Scale"/> is the in-sample MAE of the one-step naive forecast on the
/// question's reference series up to the panel's start (<see cref="NaiveScale.InSampleNaiveMae"/>,
/// Hyndman &amp; Koehler 2006). When it is not finite or not positive the item is left out of every
/// scaled figure and kept in the unscaled ones. <see cref="NaiveForecast"/> is the no-change
/// forecast, the last reference value before the panel's start; NaN leaves the item out of the
/// naive baseline and of the skill score.</para>
/// <para>The dates serve the backtest's no-look-ahead rule (<see cref="Backtest.IsKnownBefore"/>).</para>
/// </remarks>
public sealed record ScoredItem
{
    /// <summary>The expert's key (external key or panel code); <c>"consensus"</c> for the panel's consensus.</summary>
    public required string ExpertKey { get; init => field = Preconditions.CheckNotNull(value, nameof(ExpertKey)); }

    /// <summary>The question's key, e.g. the indicator key.</summary>
    public required string QuestionKey { get; init => field = Preconditions.CheckNotNull(value, nameof(QuestionKey)); }

    /// <summary>The panel's key.</summary>
    public required string PanelKey { get; init => field = Preconditions.CheckNotNull(value, nameof(PanelKey)); }

    /// <summary>The target period, in the text form of <see cref="Domain.Period"/> (e.g. <c>2027</c> or <c>2027Q3</c>).</summary>
    public required string Period { get; init => field = Preconditions.CheckNotNull(value, nameof(Period)); }

    /// <summary>The round, 1 or more.</summary>
    public required int Round { get; init => field = Preconditions.CheckInRange(value, 1, int.MaxValue, nameof(Round)); }

    /// <summary>True when <see cref="Round"/> is the panel's last round (the one its consensus came from).</summary>
    public required bool IsFinalRound { get; init; }

    /// <summary>The point forecast, or null for a range answer.</summary>
    public double? Value { get; init => field = CheckFiniteOrNull(value, nameof(Value)); }

    /// <summary>The range answer's 10th percentile, or null for a point answer.</summary>
    public double? P10 { get; init => field = CheckFiniteOrNull(value, nameof(P10)); }

    /// <summary>The range answer's 50th percentile, or null for a point answer.</summary>
    public double? P50 { get; init => field = CheckFiniteOrNull(value, nameof(P50)); }

    /// <summary>The range answer's 90th percentile, or null for a point answer.</summary>
    public double? P90 { get; init => field = CheckFiniteOrNull(value, nameof(P90)); }

    /// <summary>The outcome (the indicator's observation at the target period), finite.</summary>
    public required double Outcome { get; init => field = Preconditions.CheckFinite(value, nameof(Outcome)); }

    /// <summary>The error scale (naive in-sample MAE of the reference series); NaN or 0 when unavailable.</summary>
    public required double Scale { get; init; }

    /// <summary>The no-change forecast (last reference value before the panel's start); NaN when unavailable.</summary>
    public required double NaiveForecast { get; init; }

    /// <summary>The day the item's panel closed.</summary>
    public required DateOnly PanelClosedOn { get; init; }

    /// <summary>The day the outcome was first recorded, i.e. from when it could inform weights.</summary>
    public required DateOnly OutcomeKnownOn { get; init; }

    /// <summary>True for a range answer (P10 / P50 / P90).</summary>
    public bool IsRange => P10 is not null;

    /// <summary>The point used for MAE and the other point measures: <see cref="Value"/>, or <see cref="P50"/> for a range.</summary>
    public double Point => Value ?? P50 ?? double.NaN;

    /// <summary>The error, forecast − outcome (positive = over-forecast).</summary>
    public double Error => Point - Outcome;

    /// <summary>True when <see cref="Scale"/> is finite and positive, so the item enters the scaled figures.</summary>
    public bool HasScale => double.IsFinite(Scale) && Scale > 0;

    /// <summary>True when <see cref="NaiveForecast"/> is finite, so the item enters the naive baseline.</summary>
    public bool HasNaiveForecast => double.IsFinite(NaiveForecast);

    /// <summary>Throws <see cref="ArgumentException"/> unless exactly one forecast form is given and a range is ordered.</summary>
    internal void CheckForm(string paramName)
    {
        var rangeParts = (P10 is null ? 0 : 1) + (P50 is null ? 0 : 1) + (P90 is null ? 0 : 1);
        if (Value is not null && rangeParts == 0)
        {
            return;
        }

        if (Value is null && rangeParts == 3)
        {
            if (P10 > P50 || P50 > P90)
            {
                throw new ArgumentException(
                    $"Item {Describe()}: the range must satisfy P10 <= P50 <= P90.", paramName);
            }

            return;
        }

        throw new ArgumentException(
            $"Item {Describe()}: give either a point Value or all of P10, P50 and P90, not both and not neither.", paramName);
    }

    internal static void CheckItems(IReadOnlyList<ScoredItem> items, string paramName)
    {
        ArgumentNullException.ThrowIfNull(items, paramName);
        for (var i = 0; i < items.Count; i++)
        {
            var item = items[i] ?? throw new ArgumentException($"Element {i} is null.", paramName);
            item.CheckForm(paramName);
        }
    }

    private string Describe() => $"{ExpertKey}/{PanelKey}/{QuestionKey}/{Period}/round {Round}";

    private static double? CheckFiniteOrNull(double? value, string paramName) =>
        value is { } v ? Preconditions.CheckFinite(v, paramName) : null;
}
