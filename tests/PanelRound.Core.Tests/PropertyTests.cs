using FsCheck;
using FsCheck.Xunit;
using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

/// <summary>
/// FsCheck properties of the statistics. Integers scaled by 1/4 give exact fractions and many
/// ties; tolerances allow for rounding where the property is exact only in real arithmetic.
/// </summary>
public class PropertyTests
{
    private static readonly QuantileMethod[] Methods = [QuantileMethod.HyndmanFan6, QuantileMethod.HyndmanFan7, QuantileMethod.HyndmanFan8];
    private static readonly double[] Probabilities = [0, 0.1, 0.25, 0.4, 0.5, 0.75, 0.9, 1];

    private static double[] Values(NonEmptyArray<int> xs) => xs.Get.Select(x => x / 4.0).ToArray();

    private static bool Close(double a, double b, double scale) => Math.Abs(a - b) <= 1e-9 * (1 + scale);

    private static double Scale(double[] v) => v.Max(Math.Abs);

    [Property(MaxTest = 300)]
    public bool Median_AnySample_LiesWithinMinAndMax(NonEmptyArray<int> xs)
    {
        var v = Values(xs);
        var m = Quantiles.Median(v);
        return m >= v.Min() && m <= v.Max();
    }

    [Property(MaxTest = 300)]
    public bool Quantile_AnySample_IsMonotoneInP(NonEmptyArray<int> xs)
    {
        var v = Values(xs);
        return Methods.All(method =>
            Probabilities.Zip(Probabilities.Skip(1)).All(pair => Quantiles.Quantile(v, pair.First, method) <= Quantiles.Quantile(v, pair.Second, method)));
    }

    [Property(MaxTest = 300)]
    public bool TrimmedMean_AnySample_LiesWithinRetainedRange(NonEmptyArray<int> xs, byte alphaPercent)
    {
        var v = Values(xs);
        var alpha = (alphaPercent % 50) / 100.0;
        var sorted = v.Order().ToArray();
        var k = (int)Math.Floor((alpha * v.Length) + 1e-9);
        var mean = Quantiles.TrimmedMean(v, alpha);
        return mean >= sorted[k] && mean <= sorted[v.Length - 1 - k];
    }

    [Property(MaxTest = 300)]
    public bool WeightedQuantile_EqualWeights_EqualsHyndmanFan7(NonEmptyArray<int> xs, PositiveInt weight)
    {
        var v = Values(xs);
        var w = Enumerable.Repeat((double)weight.Get, v.Length).ToArray();
        var scale = Scale(v);
        return Probabilities.All(p => Close(Quantiles.WeightedQuantile(v, w, p), Quantiles.Quantile(v, p, QuantileMethod.HyndmanFan7), scale))
            && Close(Quantiles.WeightedMedian(v, w), Quantiles.Median(v), scale);
    }

    [Property(MaxTest = 300)]
    public bool WeightedQuantile_AnyWeights_IsMonotoneInPAndWithinRange(NonEmptyArray<int> xs, int seed)
    {
        var v = Values(xs);
        var random = new Random(seed);
        var w = v.Select(_ => (double)random.Next(1, 10)).ToArray();
        var q = Probabilities.Select(p => Quantiles.WeightedQuantile(v, w, p)).ToArray();
        return q.Zip(q.Skip(1)).All(pair => pair.First <= pair.Second) && q[0] == v.Min() && q[^1] == v.Max();
    }

    [Property(MaxTest = 200)]
    public bool Quantile_AnyPermutation_GivesTheSameValue(NonEmptyArray<int> xs, int seed)
    {
        var v = Values(xs);
        var shuffled = v.ToArray();
        new Random(seed).Shuffle(shuffled);
        return Methods.All(method => Probabilities.All(p => Quantiles.Quantile(v, p, method) == Quantiles.Quantile(shuffled, p, method)))
            && Quantiles.TrimmedMean(v, 0.2) == Quantiles.TrimmedMean(shuffled, 0.2);
    }

    [Property(MaxTest = 200)]
    public bool RoundFeedback_AnyPermutation_GivesTheSameStatisticsAndPermutedFlags(NonEmptyArray<int> xs, int seed, bool modifiedZ)
    {
        var v = Values(xs);
        var order = Enumerable.Range(0, v.Length).ToArray();
        new Random(seed).Shuffle(order);
        var shuffled = order.Select(i => v[i]).ToArray();
        var settings = new FeedbackSettings { Rule = modifiedZ ? OutlierRule.ModifiedZScore : OutlierRule.TukeyFences };
        var a = RoundFeedback.ForPoint(v, settings);
        var b = RoundFeedback.ForPoint(shuffled, settings);
        if (a.Feedback is null || b.Feedback is null)
        {
            return a.IsWithheld && b.IsWithheld && v.Length < 3;
        }

        var fa = a.Feedback;
        var fb = b.Feedback;
        var sameStatistics = fa with { IsOutlier = fb.IsOutlier, Histogram = fb.Histogram } == fb
            && fa.Histogram.SequenceEqual(fb.Histogram);
        var permutedFlags = Enumerable.Range(0, v.Length).All(j => fb.IsOutlier[j] == fa.IsOutlier[order[j]]);
        return sameStatistics && permutedFlags;
    }

    [Property(MaxTest = 300)]
    public bool Quantile_ShiftedSample_IsShifted(NonEmptyArray<int> xs, int shift)
    {
        var v = Values(xs);
        var c = shift / 8.0;
        var moved = v.Select(x => x + c).ToArray();
        var scale = Scale(v) + Math.Abs(c);
        return Methods.All(method => Probabilities.All(p => Close(Quantiles.Quantile(moved, p, method), Quantiles.Quantile(v, p, method) + c, scale)))
            && Close(Quantiles.TrimmedMean(moved, 0.1), Quantiles.TrimmedMean(v, 0.1) + c, scale);
    }

    // Hyndman & Fan types 6-8 are symmetric definitions: Q_p(c·x) = c·Q_p(x) for c > 0 and
    // c·Q_{1−p}(x) for c < 0 (the order statistics reverse).
    [Property(MaxTest = 300)]
    public bool Quantile_ScaledSample_IsScaledAndNegativeFactorsMirrorP(NonEmptyArray<int> xs, NonZeroInt factor)
    {
        var v = Values(xs);
        var c = factor.Get / 3.0;
        var scaled = v.Select(x => x * c).ToArray();
        var scale = Scale(v) * Math.Abs(c);
        return Methods.All(method => Probabilities.All(p =>
            Close(Quantiles.Quantile(scaled, p, method), c * Quantiles.Quantile(v, c > 0 ? p : 1 - p, method), scale)))
            && Close(Quantiles.TrimmedMean(scaled, 0.1), c * Quantiles.TrimmedMean(v, 0.1), scale);
    }

    [Property(MaxTest = 300)]
    public bool WeightedQuantile_NegatedSample_MirrorsP(NonEmptyArray<int> xs, int seed)
    {
        var v = Values(xs);
        var random = new Random(seed);
        var w = v.Select(_ => (double)random.Next(1, 6)).ToArray();
        var negated = v.Select(x => -x).ToArray();
        var scale = Scale(v);
        return Probabilities.All(p => Close(Quantiles.WeightedQuantile(negated, w, p), -Quantiles.WeightedQuantile(v, w, 1 - p), scale));
    }

    [Property(MaxTest = 300)]
    public bool RoundFeedback_AnySample_IsInternallyConsistent(NonEmptyArray<int> xs, byte rule)
    {
        var v = Values(xs);
        var settings = new FeedbackSettings { Rule = (OutlierRule)(rule % 3) };
        var result = RoundFeedback.ForPoint(v, settings);
        if (result.Feedback is not { } f)
        {
            return v.Length < 3;
        }

        return f.N == v.Length
            && f.Min <= f.Q1 && f.Q1 <= f.Median && f.Median <= f.Q3 && f.Q3 <= f.Max
            && f.RetainedMin <= f.TrimmedMedian && f.TrimmedMedian <= f.RetainedMax
            && f.Min <= f.RetainedMin && f.RetainedMax <= f.Max
            && f.IsOutlier.Count(x => x) == f.ExcludedCount
            && f.ExcludedCount < f.N
            && f.Histogram.Sum(b => b.Count) == f.N
            && f.Histogram.Count <= settings.MaxHistogramBins
            && v.Where((x, i) => !f.IsOutlier[i]).Min() == f.RetainedMin
            && v.Where((x, i) => !f.IsOutlier[i]).Max() == f.RetainedMax;
    }

    // Quantile averaging with the trim per quantile keeps the panel's P10 ≤ P50 ≤ P90.
    [Property(MaxTest = 300)]
    public bool RangeFeedback_AnyAnswers_AggregatesStayOrdered(NonEmptyArray<int> lows, int seed, byte trimPercent)
    {
        var random = new Random(seed);
        var answers = lows.Get.Select(low => new RangeAnswer(low, low + random.Next(0, 50), low + 50 + random.Next(0, 50))).ToArray();
        var settings = new FeedbackSettings { TrimFraction = (trimPercent % 50) / 100.0 };
        var weights = answers.Select(_ => (double)random.Next(0, 4)).ToArray();
        weights[0] = 1;
        var c = Consensus.ForRange(answers, settings, weights);
        var orderedWeighted = c.Low <= c.Value && c.Value <= c.High;
        var result = RoundFeedback.ForRange(answers, settings);
        if (result.Feedback is not { } f)
        {
            return orderedWeighted && answers.Length < 3;
        }

        return orderedWeighted && f.AggregatedP10 <= f.AggregatedP50 && f.AggregatedP50 <= f.AggregatedP90;
    }

    [Property(MaxTest = 300)]
    public bool ConsensusForRange_EqualWeights_EqualsUnweighted(NonEmptyArray<int> lows, int seed, byte trimPercent)
    {
        var random = new Random(seed);
        var answers = lows.Get.Select(low => new RangeAnswer(low, low + random.Next(0, 50), low + 50 + random.Next(0, 50))).ToArray();
        var settings = new FeedbackSettings { TrimFraction = (trimPercent % 50) / 100.0 };
        var equal = Enumerable.Repeat(2.5, answers.Length).ToArray();
        var weighted = Consensus.ForRange(answers, settings, equal);
        var plain = Consensus.ForRange(answers, settings);
        var scale = answers.Max(a => Math.Abs(a.P90)) + answers.Max(a => Math.Abs(a.P10));
        return Close(weighted.Value, plain.Value, scale) && Close(weighted.Low, plain.Low, scale) && Close(weighted.High, plain.High, scale);
    }

    [Property(MaxTest = 300)]
    public bool ConsensusForPoint_EqualWeights_EqualsUnweighted(NonEmptyArray<int> xs, byte rule)
    {
        var v = Values(xs);
        var settings = new FeedbackSettings { Rule = (OutlierRule)(rule % 3) };
        var weighted = Consensus.ForPoint(v, settings, Enumerable.Repeat(1.0, v.Length).ToArray());
        var plain = Consensus.ForPoint(v, settings);
        var scale = Scale(v);
        return Close(weighted.Value, plain.Value, scale) && Close(weighted.Low, plain.Low, scale) && Close(weighted.High, plain.High, scale);
    }
}
