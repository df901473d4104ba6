namespace PanelRound.Core.Scoring;

/// <summary>
/// Forecast error measures: a summary of scored items, and the published measures as plain functions.
/// </summary>
/// <remarks>
/// Error e = forecast − outcome: positive is an over-forecast. Point measures follow
/// Hyndman &amp; Koehler (2006), section 3; the interval score and the pinball loss follow
/// Gneiting &amp; Raftery (2007), section 6. Non-finite inputs, empty or mismatched lists are
/// programming errors and throw <see cref="ArgumentException"/>.
/// </remarks>
public static class ForecastErrors
{
    /// <summary>The α of the [P10, P90] interval: a central 80% interval.</summary>
    public const double RangeIntervalAlpha = 0.2;

    /// <summary>Summarises a set of scored items; see <see cref="ErrorSummary"/> for every definition.</summary>
    /// <param name="items">The items, each with exactly one forecast form; may be empty (every measure is then null).</param>
    public static ErrorSummary Summarise(IReadOnlyList<ScoredItem> items)
    {
        ScoredItem.CheckItems(items, nameof(items));
        var n = items.Count;
        double sumAbs = 0, sumErr = 0, sumSq = 0;
        int nMape = 0;
        double sumPct = 0;
        int nScaled = 0;
        double sumScaledAbs = 0, sumScaledErr = 0;
        int nRange = 0, covered = 0;
        double sumIs = 0, sumL10 = 0, sumL50 = 0, sumL90 = 0;
        int nRangeScaled = 0;
        double sumSIs = 0, sumSL10 = 0, sumSL50 = 0, sumSL90 = 0;
        int nNaive = 0;
        double sumNaiveAbs = 0, sumAbsOnNaive = 0;
        int nScaledNaive = 0;
        double sumScaledNaiveAbs = 0, sumScaledAbsOnNaive = 0;

        foreach (var item in items)
        {
            var y = item.Outcome;
            var e = item.Error;
            var abs = Math.Abs(e);
            sumAbs += abs;
            sumErr += e;
            sumSq += e * e;
            if (y != 0)
            {
                nMape++;
                sumPct += abs / Math.Abs(y);
            }

            var s = item.Scale;
            if (item.HasScale)
            {
                nScaled++;
                sumScaledAbs += abs / s;
                sumScaledErr += e / s;
            }

            if (item.HasNaiveForecast)
            {
                var naiveAbs = Math.Abs(item.NaiveForecast - y);
                nNaive++;
                sumNaiveAbs += naiveAbs;
                sumAbsOnNaive += abs;
                if (item.HasScale)
                {
                    nScaledNaive++;
                    sumScaledNaiveAbs += naiveAbs / s;
                    sumScaledAbsOnNaive += abs / s;
                }
            }

            if (item is { P10: { } p10, P50: { } p50, P90: { } p90 })
            {
                nRange++;
                if (p10 <= y && y <= p90)
                {
                    covered++;
                }

                var score = IntervalScore(p10, p90, RangeIntervalAlpha, y);
                var l10 = PinballLoss(p10, 0.1, y);
                var l50 = PinballLoss(p50, 0.5, y);
                var l90 = PinballLoss(p90, 0.9, y);
                sumIs += score;
                sumL10 += l10;
                sumL50 += l50;
                sumL90 += l90;
                if (item.HasScale)
                {
                    nRangeScaled++;
                    sumSIs += score / s;
                    sumSL10 += l10 / s;
                    sumSL50 += l50 / s;
                    sumSL90 += l90 / s;
                }
            }
        }

        return new ErrorSummary
        {
            N = n,
            Mae = MeanOrNull(sumAbs, n),
            MeanError = MeanOrNull(sumErr, n),
            Rmse = n == 0 ? null : Math.Sqrt(sumSq / n),
            NMape = nMape,
            Mape = nMape == 0 ? null : 100 * sumPct / nMape,
            NScaled = nScaled,
            ScaledMae = MeanOrNull(sumScaledAbs, nScaled),
            ScaledMeanError = MeanOrNull(sumScaledErr, nScaled),
            NRange = nRange,
            Coverage = nRange == 0 ? null : (double)covered / nRange,
            IntervalScore = MeanOrNull(sumIs, nRange),
            PinballLoss = nRange == 0 ? null : new QuantileLosses(sumL10 / nRange, sumL50 / nRange, sumL90 / nRange),
            NRangeScaled = nRangeScaled,
            ScaledIntervalScore = MeanOrNull(sumSIs, nRangeScaled),
            ScaledPinballLoss = nRangeScaled == 0
                ? null
                : new QuantileLosses(sumSL10 / nRangeScaled, sumSL50 / nRangeScaled, sumSL90 / nRangeScaled),
            NNaive = nNaive,
            NaiveMae = MeanOrNull(sumNaiveAbs, nNaive),
            Skill = SkillOrNull(sumAbsOnNaive, sumNaiveAbs, nNaive),
            NScaledNaive = nScaledNaive,
            ScaledNaiveMae = MeanOrNull(sumScaledNaiveAbs, nScaledNaive),
            ScaledSkill = SkillOrNull(sumScaledAbsOnNaive, sumScaledNaiveAbs, nScaledNaive),
        };
    }

    /// <summary>Mean absolute error, (1/n)·Σ |f_i − y_i|.</summary>
    /// <remarks>Hyndman &amp; Koehler (2006), section 3.1. At least one pair; equal lengths.</remarks>
    public static double Mae(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes)
    {
        CheckPairs(forecasts, outcomes);
        var sum = 0.0;
        for (var i = 0; i < forecasts.Count; i++)
        {
            sum += Math.Abs(forecasts[i] - outcomes[i]);
        }

        return sum / forecasts.Count;
    }

    /// <summary>Mean error (bias), (1/n)·Σ (f_i − y_i): positive = over-forecasts.</summary>
    /// <remarks>Error convention forecast − outcome. At least one pair; equal lengths.</remarks>
    public static double MeanError(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes)
    {
        CheckPairs(forecasts, outcomes);
        var sum = 0.0;
        for (var i = 0; i < forecasts.Count; i++)
        {
            sum += forecasts[i] - outcomes[i];
        }

        return sum / forecasts.Count;
    }

    /// <summary>Mean squared error, (1/n)·Σ (f_i − y_i)².</summary>
    /// <remarks>Hyndman &amp; Koehler (2006), section 3.1. At least one pair; equal lengths.</remarks>
    public static double Mse(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes)
    {
        CheckPairs(forecasts, outcomes);
        var sum = 0.0;
        for (var i = 0; i < forecasts.Count; i++)
        {
            var e = forecasts[i] - outcomes[i];
            sum += e * e;
        }

        return sum / forecasts.Count;
    }

    /// <summary>Root mean squared error, √MSE.</summary>
    /// <remarks>Hyndman &amp; Koehler (2006), section 3.1.</remarks>
    public static double Rmse(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes) => Math.Sqrt(Mse(forecasts, outcomes));

    /// <summary>
    /// Mean absolute percentage error in percent, 100·mean |(f_i − y_i) / y_i| over the pairs with
    /// y_i ≠ 0; null when every outcome is zero.
    /// </summary>
    /// <remarks>Hyndman &amp; Koehler (2006), section 3.2 (p_t = 100·e_t / Y_t).</remarks>
    public static double? Mape(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes)
    {
        CheckPairs(forecasts, outcomes);
        var sum = 0.0;
        var n = 0;
        for (var i = 0; i < forecasts.Count; i++)
        {
            if (outcomes[i] != 0)
            {
                sum += Math.Abs((forecasts[i] - outcomes[i]) / outcomes[i]);
                n++;
            }
        }

        return n == 0 ? null : 100 * sum / n;
    }

    /// <summary>
    /// Mean absolute scaled error: the MAE of the forecasts divided by the in-sample MAE of the
    /// one-step naive forecast on the training series; null when that scale is unavailable.
    /// </summary>
    /// <param name="trainingSeries">The series before the forecast origin, oldest first.</param>
    /// <param name="outcomes">The outcomes.</param>
    /// <param name="forecasts">The forecasts, one per outcome.</param>
    /// <remarks>
    /// Hyndman &amp; Koehler (2006), section 3.4: MASE = mean |q_t|, q_t = e_t / ((1/(n − 1))·Σ_{i=2..n} |Y_i − Y_{i−1}|).
    /// The reason for a missing scale is in <see cref="NaiveScale.InSampleNaiveMae"/>.
    /// </remarks>
    public static double? Mase(IReadOnlyList<double> trainingSeries, IReadOnlyList<double> outcomes, IReadOnlyList<double> forecasts)
    {
        var scale = NaiveScale.InSampleNaiveMae(trainingSeries);
        var mae = Mae(forecasts, outcomes);
        return scale.IsAvailable ? mae / scale.Value : null;
    }

    /// <summary>
    /// The interval score of the central (1 − α) interval [l, u] for the outcome y:
    /// (u − l) + (2/α)(l − y)·1[y &lt; l] + (2/α)(y − u)·1[y &gt; u].
    /// </summary>
    /// <param name="lower">The lower end l.</param>
    /// <param name="upper">The upper end u ≥ l.</param>
    /// <param name="alpha">α in (0, 1): the interval's nominal miss probability (0.2 for [P10, P90]).</param>
    /// <param name="y">The outcome.</param>
    /// <remarks>
    /// Gneiting &amp; Raftery (2007), section 6.2, eq. (43), negatively oriented (lower is better): the
    /// width plus a penalty of 2/α per unit by which the outcome falls outside. It equals
    /// (2/α)·[pinball(l, α/2, y) + pinball(u, 1 − α/2, y)].
    /// </remarks>
    public static double IntervalScore(double lower, double upper, double alpha, double y)
    {
        Preconditions.CheckFinite(lower);
        Preconditions.CheckFinite(upper);
        Preconditions.CheckFinite(y);
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), alpha, "Alpha must be in (0, 1).");
        }

        if (lower > upper)
        {
            throw new ArgumentException("The lower end must not exceed the upper end.", nameof(lower));
        }

        var score = upper - lower;
        if (y < lower)
        {
            score += 2 / alpha * (lower - y);
        }
        else if (y > upper)
        {
            score += 2 / alpha * (y - upper);
        }

        return score;
    }

    /// <summary>
    /// The pinball (quantile) loss of the τ-quantile forecast q for the outcome y:
    /// τ(y − q) if y ≥ q, else (1 − τ)(q − y).
    /// </summary>
    /// <param name="quantile">The quantile forecast q.</param>
    /// <param name="tau">The probability level τ in [0, 1].</param>
    /// <param name="y">The outcome.</param>
    /// <remarks>
    /// The asymmetric piecewise linear quantile loss of Gneiting &amp; Raftery (2007), section 6, written as a
    /// loss (lower is better, never negative). At τ = 0.5 it is half the absolute error.
    /// </remarks>
    public static double PinballLoss(double quantile, double tau, double y)
    {
        Preconditions.CheckFinite(quantile);
        Preconditions.CheckInRange(tau, 0, 1);
        Preconditions.CheckFinite(y);
        return y >= quantile ? tau * (y - quantile) : (1 - tau) * (quantile - y);
    }

    private static double? MeanOrNull(double sum, int n) => n == 0 ? null : sum / n;

    private static double? SkillOrNull(double sumAbs, double sumNaiveAbs, int n) =>
        n == 0 || sumNaiveAbs == 0 ? null : 1 - (sumAbs / sumNaiveAbs);

    private static void CheckPairs(IReadOnlyList<double> forecasts, IReadOnlyList<double> outcomes)
    {
        Preconditions.CheckAllFinite(forecasts);
        Preconditions.CheckAllFinite(outcomes);
        Preconditions.CheckNotEmpty(forecasts);
        if (forecasts.Count != outcomes.Count)
        {
            throw new ArgumentException(
                $"There are {forecasts.Count} forecasts for {outcomes.Count} outcomes; they must match one to one.", nameof(outcomes));
        }
    }
}
