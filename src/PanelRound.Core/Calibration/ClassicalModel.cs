using PanelRound.Core.Statistics;

namespace PanelRound.Core.Calibration;

/// <summary>
/// The classical model of structured expert judgment: each expert's calibration and information
/// on questions with known true values, performance weights, and the weighted combination
/// (R. M. Cooke, <i>Experts in Uncertainty</i>, Oxford University Press, 1991, chapter 12).
/// </summary>
/// <remarks>
/// <para>Quantiles: P10, P50 and P90, so the four inter-quantile bins carry the probabilities
/// p = (0.1, 0.4, 0.4, 0.1). A truth equal to a quantile counts in the bin above it (each
/// quantile is the closed lower edge of its bin).</para>
/// <para>Calibration: 1 − F(2·N·I(s, p)), with F the chi-square distribution function with 3
/// degrees of freedom, s the shares of the N truths in the four bins and
/// I(s, p) = Σ s_j ln(s_j / p_j) (0·ln 0 = 0).</para>
/// <para>Information of one answer: the relative information of the expert's
/// minimum-information distribution (uniform within each bin, the outer bins ending at the
/// intrinsic range) against the uniform background on the intrinsic range,
/// Σ p_j ln(p_j / (w_j / W)) with w_j the bins' widths and W the range's width. The intrinsic
/// range runs from the smallest to the largest of all experts' quantiles and the truth, widened
/// on each side by the overshoot times that spread. A log-uniform background does the same on
/// the logarithms of the values; it falls back to uniform for a question with a value that is
/// not positive. An expert's information is the mean over the questions answered.</para>
/// <para>Implementation note: equal quantiles make a bin of width 0 and infinite information;
/// a bin is taken at least 10⁻⁶ of the range wide, so such an answer scores very high
/// information, and its calibration (a point claims certainty) carries the penalty. If every
/// value of a question coincides, the spread is taken as max(|value|, 1).</para>
/// <para>Weight: calibration × information, 0 below the cut-off α, normalised to sum 1. The
/// optimised α is the value among 0 and the experts' calibration scores whose weights give the
/// combination with the highest combined score (calibration × information, scored as a virtual
/// expert); ties keep the smaller α, and α = 0 is always a candidate, so the optimised
/// combination never scores below the one with α = 0.</para>
/// <para>Implementation note: the result does not depend on the order of the items or the
/// assessments. Floating-point sums depend on their order in the last bits, and those bits
/// matter: the weights feed the pooled quantiles, and a truth that equals a quantile (common
/// with rounded figures) falls in one bin or the next by one ulp. So an expert's information is
/// summed in ascending order, and <see cref="LinearPool"/> sums over the answers in a canonical
/// order and returns a quantile that lies on an answer's knot as that answer's own value.</para>
/// </remarks>
public static class ClassicalModel
{
    /// <summary>The probabilities of the four inter-quantile bins of P10 / P50 / P90.</summary>
    public static IReadOnlyList<double> BinProbabilities { get; } = [0.1, 0.4, 0.4, 0.1];

    private static readonly double[] Cumulative = [0, 0.1, 0.5, 0.9, 1];

    private const double MinimumBinShare = 1e-6;

    /// <summary>F(x) of the chi-square distribution with 3 degrees of freedom.</summary>
    public static double ChiSquare3Cdf(double x) => 1 - ChiSquare3UpperTail(x);

    /// <summary>
    /// 1 − F(x) of the chi-square distribution with 3 degrees of freedom, without cancellation in
    /// the tail: Q(x) = 2·(1 − Φ(√x)) + √(2x/π)·e^(−x/2) (Abramowitz &amp; Stegun 26.4.5 with ν = 3).
    /// </summary>
    public static double ChiSquare3UpperTail(double x)
    {
        Preconditions.CheckFinite(x);
        if (x <= 0)
        {
            return 1;
        }

        var q = (2 * NormalDistribution.UpperTailProbability(Math.Sqrt(x))) + (Math.Sqrt(2 * x / Math.PI) * Math.Exp(-x / 2));
        return Math.Clamp(q, 0, 1);
    }

    /// <summary>I(s, p) = Σ s_j ln(s_j / p_j), with 0·ln 0 = 0.</summary>
    public static double RelativeInformation(IReadOnlyList<double> s, IReadOnlyList<double> p)
    {
        ArgumentNullException.ThrowIfNull(s);
        ArgumentNullException.ThrowIfNull(p);
        if (s.Count != p.Count)
        {
            throw new ArgumentException("s and p must have the same length.", nameof(s));
        }

        var sum = 0.0;
        for (var j = 0; j < s.Count; j++)
        {
            if (s[j] > 0)
            {
                sum += s[j] * Math.Log(s[j] / p[j]);
            }
        }

        return sum;
    }

    /// <summary>The bin (0 to 3) a truth falls in: below P10, P10 to P50, P50 to P90, P90 and above.</summary>
    public static int BinOf(double truth, RangeAnswer answer)
    {
        ArgumentNullException.ThrowIfNull(answer);
        return truth < answer.P10 ? 0 : truth < answer.P50 ? 1 : truth < answer.P90 ? 2 : 3;
    }

    /// <summary>The test statistic 2·N·I(s, p) and the calibration score 1 − F(statistic) of the hits per bin.</summary>
    /// <param name="hits">Four non-negative counts, at least one positive.</param>
    public static (double Statistic, double Calibration) CalibrationOf(IReadOnlyList<int> hits)
    {
        ArgumentNullException.ThrowIfNull(hits);
        if (hits.Count != 4 || hits.Any(h => h < 0) || hits.Sum() == 0)
        {
            throw new ArgumentException("Four non-negative hit counts, at least one positive, are required.", nameof(hits));
        }

        var n = hits.Sum();
        var s = hits.Select(h => (double)h / n).ToArray();
        var statistic = 2 * n * RelativeInformation(s, BinProbabilities);
        return (statistic, ChiSquare3UpperTail(statistic));
    }

    /// <summary>The intrinsic range of a question from its values (all experts' quantiles and the truth, if known).</summary>
    public static IntrinsicRange RangeOf(IEnumerable<double> values, double overshoot, BackgroundMeasure background)
    {
        ArgumentNullException.ThrowIfNull(values);
        Preconditions.CheckInRange(overshoot, 0.0, 10.0);
        var list = values.ToList();
        Preconditions.CheckNotEmpty(list);
        Preconditions.CheckAllFinite(list);
        var measure = background == BackgroundMeasure.LogUniform && list.All(v => v > 0) ? BackgroundMeasure.LogUniform : BackgroundMeasure.Uniform;
        var scaled = measure == BackgroundMeasure.LogUniform ? list.Select(v => Math.Log(v)).ToList() : list;
        double low = scaled.Min(), high = scaled.Max();
        var spread = high - low;
        if (spread <= 0)
        {
            spread = Math.Max(Math.Abs(low), 1);
        }

        // A zero overshoot still needs room outside the outermost quantiles for the outer bins.
        var margin = Math.Max(overshoot * spread, MinimumBinShare * spread);
        return new IntrinsicRange(low - margin, high + margin, measure);
    }

    /// <summary>The relative information of one answer's minimum-information distribution against the background on the range.</summary>
    public static double InformationOf(RangeAnswer answer, IntrinsicRange range)
    {
        ArgumentNullException.ThrowIfNull(answer);
        ArgumentNullException.ThrowIfNull(range);
        var knots = Knots(answer, range);
        var width = range.High - range.Low;
        var minimum = MinimumBinShare * width;
        var sum = 0.0;
        for (var j = 0; j < 4; j++)
        {
            var w = Math.Max(knots[j + 1] - knots[j], minimum);
            sum += BinProbabilities[j] * Math.Log(BinProbabilities[j] * width / w);
        }

        return sum;
    }

    /// <summary>Scores one expert (or a combination) over the answers with their truths and ranges.</summary>
    public static PerformanceScore Score(string key, IReadOnlyList<(RangeAnswer Answer, double Truth, IntrinsicRange Range)> answers)
    {
        ArgumentNullException.ThrowIfNull(answers);
        Preconditions.CheckNotEmpty(answers);
        var hits = new int[4];
        var terms = new double[answers.Count];
        for (var i = 0; i < answers.Count; i++)
        {
            var (answer, truth, range) = answers[i];
            hits[BinOf(truth, answer)]++;
            terms[i] = InformationOf(answer, range);
        }

        // Implementation note: summed in ascending order, so the mean does not depend on the order of the questions
        // (it feeds the weights, and the weights the pooled quantiles a truth is compared with).
        Array.Sort(terms);
        var information = 0.0;
        foreach (var term in terms)
        {
            information += term;
        }

        var (statistic, calibration) = CalibrationOf(hits);
        return new PerformanceScore(key, answers.Count, hits, statistic, calibration, information / answers.Count);
    }

    /// <summary>The intrinsic range of each item, from all assessments of it and its truth.</summary>
    public static IReadOnlyDictionary<string, IntrinsicRange> Ranges(
        IReadOnlyList<CalibrationItem> items, IReadOnlyList<CalibrationAssessment> assessments, double overshoot)
    {
        ArgumentNullException.ThrowIfNull(items);
        ArgumentNullException.ThrowIfNull(assessments);
        var byItem = assessments.ToLookup(a => a.ItemKey, StringComparer.Ordinal);
        return items.ToDictionary(
            i => i.Key,
            i => RangeOf(byItem[i.Key].SelectMany(a => new[] { a.Answer.P10, a.Answer.P50, a.Answer.P90 }).Append(i.Truth), overshoot, i.Background),
            StringComparer.Ordinal);
    }

    /// <summary>
    /// Scores every expert on the items, weighs them and scores the weighted and the equal-weight
    /// combinations. Assessments of unknown items are ignored; an expert with no assessment of
    /// the items is not listed.
    /// </summary>
    public static ClassicalModelResult Evaluate(
        IReadOnlyList<CalibrationItem> items, IReadOnlyList<CalibrationAssessment> assessments, CalibrationSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        return Evaluate(items, assessments, settings, Ranges(items, assessments, settings.Overshoot));
    }

    /// <summary>As <see cref="Evaluate(IReadOnlyList{CalibrationItem}, IReadOnlyList{CalibrationAssessment}, CalibrationSettings)"/>, with the ranges given (a cross-validation keeps each question's range from all its data).</summary>
    public static ClassicalModelResult Evaluate(
        IReadOnlyList<CalibrationItem> items, IReadOnlyList<CalibrationAssessment> assessments, CalibrationSettings settings,
        IReadOnlyDictionary<string, IntrinsicRange> ranges)
    {
        ArgumentNullException.ThrowIfNull(items);
        ArgumentNullException.ThrowIfNull(assessments);
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(ranges);
        if (settings.Cutoff is { } fixedCutoff)
        {
            Preconditions.CheckInRange(fixedCutoff, 0.0, 1.0, nameof(settings));
        }

        var itemByKey = items.ToDictionary(i => i.Key, StringComparer.Ordinal);
        var used = assessments.Where(a => itemByKey.ContainsKey(a.ItemKey)).ToList();
        var scores = used.GroupBy(a => a.ExpertKey, StringComparer.Ordinal)
            .OrderBy(g => g.Key, StringComparer.Ordinal)
            .Select(g => Score(g.Key, g.Select(a => (a.Answer, itemByKey[a.ItemKey].Truth, ranges[a.ItemKey])).ToList()))
            .ToList();
        var equalWeights = scores.ToDictionary(s => s.Key, _ => 1.0, StringComparer.Ordinal);
        var equal = CombinationScore("equal", items, used, equalWeights, ranges)
            ?? throw new ArgumentException("At least one assessment of the items is required.", nameof(assessments));

        double cutoff;
        PerformanceScore? weighted;
        if (settings.Cutoff is { } given)
        {
            cutoff = given;
            weighted = CombinationScore("weighted", items, used, RawWeights(scores, cutoff), ranges);
        }
        else
        {
            (cutoff, weighted) = (0, null);
            foreach (var alpha in scores.Select(s => s.Calibration).Append(0).Distinct().Order())
            {
                var candidate = CombinationScore("weighted", items, used, RawWeights(scores, alpha), ranges);
                // Scores equal up to rounding (the order of the questions changes the last bits of a sum) are a tie: the lower cut-off stays.
                if (candidate is not null && (weighted is null || candidate.Combined > weighted.Combined + (1e-12 * Math.Max(1, Math.Abs(weighted.Combined)))))
                {
                    (cutoff, weighted) = (alpha, candidate);
                }
            }
        }

        var raw = RawWeights(scores, cutoff);
        var total = raw.Values.Sum();
        var experts = scores.Select(s => new ExpertPerformance(s, weighted is null || total <= 0 ? 0 : raw[s.Key] / total)).ToList();
        return new ClassicalModelResult(experts, cutoff, settings.Cutoff is null, weighted, equal, ranges);
    }

    /// <summary>Unnormalised weights: calibration × information, 0 below the cut-off.</summary>
    public static Dictionary<string, double> RawWeights(IEnumerable<PerformanceScore> scores, double cutoff)
    {
        ArgumentNullException.ThrowIfNull(scores);
        return scores.ToDictionary(s => s.Key, s => s.Calibration >= cutoff ? s.Calibration * s.Information : 0, StringComparer.Ordinal);
    }

    /// <summary>
    /// The combination with the weights (by expert key, unnormalised) scored as a virtual expert
    /// on the items: on each item the linear pool of the assessors' minimum-information
    /// distributions, read at 10%, 50% and 90%. An item none of whose assessors has positive
    /// weight is left out; null when every item is.
    /// </summary>
    public static PerformanceScore? CombinationScore(
        string key, IReadOnlyList<CalibrationItem> items, IReadOnlyList<CalibrationAssessment> assessments,
        IReadOnlyDictionary<string, double> weights, IReadOnlyDictionary<string, IntrinsicRange> ranges)
    {
        ArgumentNullException.ThrowIfNull(items);
        ArgumentNullException.ThrowIfNull(assessments);
        ArgumentNullException.ThrowIfNull(weights);
        ArgumentNullException.ThrowIfNull(ranges);
        var byItem = assessments.ToLookup(a => a.ItemKey, StringComparer.Ordinal);
        var answers = new List<(RangeAnswer, double, IntrinsicRange)>();
        foreach (var item in items)
        {
            var own = byItem[item.Key].Where(a => weights.GetValueOrDefault(a.ExpertKey) > 0).ToList();
            if (own.Count == 0)
            {
                continue;
            }

            var range = ranges[item.Key];
            answers.Add((LinearPool.Combine(own.Select(a => a.Answer).ToList(), own.Select(a => weights[a.ExpertKey]).ToList(), range), item.Truth, range));
        }

        return answers.Count == 0 ? null : Score(key, answers);
    }

    /// <summary>The five knots (range low, P10, P50, P90, range high) of an answer's minimum-information distribution on the range's scale.</summary>
    internal static double[] Knots(RangeAnswer answer, IntrinsicRange range) =>
        [range.Low, Clamp(range.ToScale(answer.P10), range), Clamp(range.ToScale(answer.P50), range), Clamp(range.ToScale(answer.P90), range), range.High];

    internal static IReadOnlyList<double> CumulativeAtKnots => Cumulative;

    private static double Clamp(double y, IntrinsicRange range) => Math.Clamp(y, range.Low, range.High);
}
