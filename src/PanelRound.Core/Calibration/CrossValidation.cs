namespace PanelRound.Core.Calibration;

/// <summary>One split of a cross-validation: the combinations fitted on the training questions and scored on the rest.</summary>
/// <param name="Training">The keys of the training questions.</param>
/// <param name="Weighted">The performance-weighted combination on the test questions; null when no expert had positive weight on the training part.</param>
/// <param name="Equal">The equal-weight combination on the test questions.</param>
public sealed record CrossValidationSplit(IReadOnlyList<string> Training, PerformanceScore? Weighted, PerformanceScore Equal);

/// <summary>The out-of-sample comparison of performance weights against equal weights.</summary>
/// <param name="Questions">The number of calibration questions.</param>
/// <param name="TrainingSize">The number of questions each split trains on.</param>
/// <param name="Exhaustive">True when every split of that size was run; false for a random sample.</param>
/// <param name="Seed">The random sample's seed (null when exhaustive).</param>
/// <param name="Splits">Each split run.</param>
/// <param name="WeightedWins">Splits where the weighted combination's combined score beat the equal one's.</param>
/// <param name="MeanWeightedCombined">Mean combined score of the weighted combination over the splits that had one.</param>
/// <param name="MeanEqualCombined">Mean combined score of the equal-weight combination over the same splits.</param>
/// <param name="MeanWeightedCalibration">Mean calibration of the weighted combination.</param>
/// <param name="MeanEqualCalibration">Mean calibration of the equal-weight combination.</param>
/// <param name="MeanWeightedInformation">Mean information of the weighted combination.</param>
/// <param name="MeanEqualInformation">Mean information of the equal-weight combination.</param>
public sealed record CrossValidationResult(
    int Questions, int TrainingSize, bool Exhaustive, int? Seed, IReadOnlyList<CrossValidationSplit> Splits, int WeightedWins,
    double? MeanWeightedCombined, double? MeanEqualCombined, double? MeanWeightedCalibration, double? MeanEqualCalibration,
    double? MeanWeightedInformation, double? MeanEqualInformation)
{
    /// <summary>Splits that had a weighted combination (some expert passed the cut-off on the training part).</summary>
    public int Compared => Splits.Count(s => s.Weighted is not null);

    /// <summary>Mean weighted combined score over mean equal combined score; above 1 favours performance weights on this panel.</summary>
    public double? Ratio => MeanWeightedCombined is { } w && MeanEqualCombined is { } e && e > 0 ? w / e : null;
}

/// <summary>
/// Cross-validation of the classical model in the manner of A. R. Colson and R. M. Cooke,
/// "Cross validation for the classical model of structured expert judgment", Reliability
/// Engineering &amp; System Safety 163 (2017) 109-120: the weights (and the optimised α) are
/// fitted on a training part of the calibration questions, and the weighted and the
/// equal-weight combinations are scored on the remaining questions.
/// </summary>
/// <remarks>
/// Every split of the chosen training size is run when there are at most
/// the given maximum of them; otherwise a random sample of that many distinct
/// splits, drawn with <see cref="Random"/> seeded with the given seed, so a run can be repeated.
/// Each question's intrinsic range comes from all its data, as in the full evaluation, so a
/// question's information does not depend on which part it falls in.
/// </remarks>
public static class CrossValidation
{
    /// <summary>The smallest number of calibration questions for a cross-validation.</summary>
    public const int MinimumQuestions = 8;

    /// <summary>Runs the cross-validation.</summary>
    /// <param name="items">The calibration questions, at least <see cref="MinimumQuestions"/>.</param>
    /// <param name="assessments">The experts' answers to them.</param>
    /// <param name="settings">Overshoot and cut-off, as in the full evaluation.</param>
    /// <param name="trainingSize">Questions per training part, 1 to N − 1.</param>
    /// <param name="maxSplits">The most splits run; beyond, a random sample of this size.</param>
    /// <param name="seed">The random sample's seed.</param>
    public static CrossValidationResult Run(
        IReadOnlyList<CalibrationItem> items, IReadOnlyList<CalibrationAssessment> assessments, CalibrationSettings settings,
        int trainingSize, int maxSplits = 1000, int seed = 20170401)
    {
        ArgumentNullException.ThrowIfNull(items);
        ArgumentNullException.ThrowIfNull(assessments);
        ArgumentNullException.ThrowIfNull(settings);
        var n = items.Count;
        if (n < MinimumQuestions)
        {
            throw new ArgumentException($"A cross-validation needs at least {MinimumQuestions} calibration questions.", nameof(items));
        }

        Preconditions.CheckInRange(trainingSize, 1, n - 1);
        Preconditions.CheckInRange(maxSplits, 1, 100_000);
        var ranges = ClassicalModel.Ranges(items, assessments, settings.Overshoot);
        var total = Binomial(n, trainingSize);
        var exhaustive = total <= maxSplits;
        var subsets = exhaustive ? AllSubsets(n, trainingSize) : Sample(n, trainingSize, maxSplits, seed);
        var splits = new List<CrossValidationSplit>();
        foreach (var subset in subsets)
        {
            var inTraining = new bool[n];
            foreach (var i in subset)
            {
                inTraining[i] = true;
            }

            var training = items.Where((_, i) => inTraining[i]).ToList();
            var test = items.Where((_, i) => !inTraining[i]).ToList();
            var trainingKeys = training.Select(t => t.Key).ToHashSet(StringComparer.Ordinal);
            var trainingAssessments = assessments.Where(a => trainingKeys.Contains(a.ItemKey)).ToList();
            var testAssessments = assessments.Where(a => !trainingKeys.Contains(a.ItemKey)).ToList();
            if (trainingAssessments.Count == 0 || testAssessments.Count == 0)
            {
                continue;
            }

            var fit = ClassicalModel.Evaluate(training, trainingAssessments, settings, ranges);
            var experts = fit.Experts.Select(e => e.Score.Key).ToList();
            var weighted = fit.Weights is { } w
                ? ClassicalModel.CombinationScore("weighted", test, testAssessments, w, ranges)
                : null;
            var equal = ClassicalModel.CombinationScore("equal", test, testAssessments, experts.ToDictionary(k => k, _ => 1.0, StringComparer.Ordinal), ranges);
            if (equal is null)
            {
                continue;
            }

            splits.Add(new CrossValidationSplit([.. training.Select(t => t.Key)], weighted, equal));
        }

        var compared = splits.Where(s => s.Weighted is not null).ToList();
        double? Mean(Func<CrossValidationSplit, double> f) => compared.Count == 0 ? null : compared.Average(f);
        return new CrossValidationResult(
            n, trainingSize, exhaustive, exhaustive ? null : seed, splits,
            compared.Count(s => s.Weighted!.Combined > s.Equal.Combined),
            Mean(s => s.Weighted!.Combined), Mean(s => s.Equal.Combined),
            Mean(s => s.Weighted!.Calibration), Mean(s => s.Equal.Calibration),
            Mean(s => s.Weighted!.Information), Mean(s => s.Equal.Information));
    }

    /// <summary>n choose k, saturating at <see cref="long.MaxValue"/>.</summary>
    public static long Binomial(int n, int k)
    {
        k = Math.Min(k, n - k);
        long result = 1;
        for (var i = 1; i <= k; i++)
        {
            var next = result * (n - k + i) / i;
            if (next < result)
            {
                return long.MaxValue;
            }

            result = next;
        }

        return result;
    }

    private static IEnumerable<int[]> AllSubsets(int n, int k)
    {
        var index = Enumerable.Range(0, k).ToArray();
        while (true)
        {
            yield return (int[])index.Clone();
            var i = k - 1;
            while (i >= 0 && index[i] == n - k + i)
            {
                i--;
            }

            if (i < 0)
            {
                yield break;
            }

            index[i]++;
            for (var j = i + 1; j < k; j++)
            {
                index[j] = index[j - 1] + 1;
            }
        }
    }

    private static List<int[]> Sample(int n, int k, int count, int seed)
    {
        var random = new Random(seed);
        var seen = new HashSet<string>(StringComparer.Ordinal);
        var result = new List<int[]>();
        var all = Enumerable.Range(0, n).ToArray();
        while (result.Count < count)
        {
            var copy = (int[])all.Clone();
            random.Shuffle(copy);
            var subset = copy.Take(k).Order().ToArray();
            if (seen.Add(string.Join(',', subset)))
            {
                result.Add(subset);
            }
        }

        return result;
    }
}
