using PanelRound.Core.Calibration;
using PanelRound.Core.Statistics;
using MathNetChiSquared = MathNet.Numerics.Distributions.ChiSquared;

namespace PanelRound.Core.Tests.Calibration;

/// <summary>
/// Reference checks of the classical model. Source of the formulas: R. M. Cooke, "Experts in
/// Uncertainty", Oxford University Press, 1991, chapter 12 (calibration 1 − F(2·N·I(s, p)) with
/// the chi-square distribution with 3 degrees of freedom for four bins; information of the
/// minimum-information distribution against a uniform background on the intrinsic range with a
/// 10% overshoot).
/// </summary>
public class ClassicalModelTests
{
    // Reference library: MathNet.Numerics ChiSquared.CDF (3 degrees of freedom).
    [Fact]
    public void ChiSquare3Cdf_Grid_MatchesMathNetToAbsolute1e13()
    {
        for (var x = 0.0; x <= 120; x += 0.25)
        {
            Assert.Equal(MathNetChiSquared.CDF(3, x), ClassicalModel.ChiSquare3Cdf(x), 1e-13);
        }
    }

    // Reference library: MathNet.Numerics ChiSquared.CDF; the upper tail compared where 1 − CDF keeps ten digits.
    [Fact]
    public void ChiSquare3UpperTail_ModerateTail_MatchesMathNetToRelative1e9()
    {
        foreach (var x in new[] { 0.1, 0.5, 1, 2.5, 5, 7.8147, 11.34, 16.27 })
        {
            var expected = 1 - MathNetChiSquared.CDF(3, x);
            Assert.Equal(1, ClassicalModel.ChiSquare3UpperTail(x) / expected, 1e-9);
        }
    }

    // Cooke (1991), ch. 12: calibration is 1 − F(2·N·I(s, p)); hits in exact proportion to p give s = p.
    // Hand-worked: 10 questions, hits (1, 4, 4, 1): s = (0.1, 0.4, 0.4, 0.1) = p,
    // I = Σ s ln(s/p) = Σ s·ln 1 = 0, statistic 2·10·0 = 0, calibration 1 − F(0) = 1.
    [Fact]
    public void CalibrationOf_HitsProportionalToP_IsZeroInformationAndCalibrationOne()
    {
        var (statistic, calibration) = ClassicalModel.CalibrationOf([1, 4, 4, 1]);
        Assert.Equal(0, statistic, 1e-15);
        Assert.Equal(1, calibration, 1e-15);
        Assert.Equal(0, ClassicalModel.RelativeInformation([0.1, 0.4, 0.4, 0.1], ClassicalModel.BinProbabilities), 1e-15);
    }

    // Cooke (1991), ch. 12. Hand-worked: 10 questions, every truth outside [P10, P90], 5 below and 5 above.
    // s = (0.5, 0, 0, 0.5); I = 0.5·ln(0.5/0.1) + 0.5·ln(0.5/0.1) = ln 5 = 1.6094379.
    // Statistic x = 2·N·I = 20·ln 5 = 32.188758.
    // Chi-square, 3 d.o.f.: 1 − F(x) = erfc(√(x/2)) + √(2x/π)·e^(−x/2).
    //   e^(−x/2) = e^(−10 ln 5) = 5^(−10) = 1.024e-7.
    //   √(2x/π) = √(64.377516/3.1415927) = √20.492014 = 4.5268106, so the second term is 4.635454e-7.
    //   z = √(x/2) = √16.094379 = 4.0117800; erfc(z) ≈ e^(−z²)/(z√π)·(1 − 1/(2z²) + 3/(4z⁴))
    //     = 1.024e-7/(4.0117800·1.7724539)·(1 − 0.0310666 + 0.0028953) = 1.4400838e-8·0.9718287 = 1.399515e-8.
    //   Calibration = 1.399515e-8 + 4.635454e-7 = 4.775406e-7.
    [Fact]
    public void Score_TenTruthsOutsideTheBands_GivesTheHandComputedCalibration()
    {
        var range = ClassicalModel.RangeOf([0, 200], 0.10, BackgroundMeasure.Uniform);
        var answer = new RangeAnswer(90, 100, 110);
        var answers = Enumerable.Range(0, 10).Select(i => (answer, i < 5 ? 50.0 : 150.0, range)).ToList();

        var score = ClassicalModel.Score("E1", answers);

        Assert.Equal(new[] { 5, 0, 0, 5 }, score.Hits);
        Assert.Equal(10, score.N);
        Assert.Equal(32.188758, score.Statistic, 1e-6);
        Assert.Equal(1, score.Calibration / 4.775406e-7, 1e-4);
    }

    // Cooke (1991), ch. 12: information against the uniform background on the intrinsic range.
    // Hand-worked: P10 = 20, P50 = 30, P90 = 40, truth 50, one expert.
    // Values 20, 30, 40, 50: spread 30, overshoot 10% = 3, so the range is [17, 53], W = 36.
    // Bin widths: 20 − 17 = 3, 10, 10, 53 − 40 = 13.
    // I = 0.1·ln(0.1·36/3) + 0.4·ln(0.4·36/10) + 0.4·ln(0.4·36/10) + 0.1·ln(0.1·36/13)
    //   = 0.1·ln 1.2 + 0.8·ln 1.44 + 0.1·ln(3.6/13)
    //   = 0.1·0.1823216 + 0.8·0.3646431 + 0.1·(1.2809338 − 2.5649494)
    //   = 0.0182322 + 0.2917145 − 0.1284016 = 0.1815451.
    [Fact]
    public void InformationOf_OneQuestion_GivesTheHandComputedValue()
    {
        var items = new[] { new CalibrationItem("q1", 50) };
        var assessments = new[] { new CalibrationAssessment("E1", "q1", new RangeAnswer(20, 30, 40)) };

        var ranges = ClassicalModel.Ranges(items, assessments, 0.10);

        Assert.Equal(17, ranges["q1"].Low, 1e-12);
        Assert.Equal(53, ranges["q1"].High, 1e-12);
        Assert.Equal(0.1815451, ClassicalModel.InformationOf(assessments[0].Answer, ranges["q1"]), 1e-6);
    }

    // Log-uniform background (Cooke 1991, ch. 12): the same on the logarithms.
    // Hand-worked: P10 = 10, P50 = 100, P90 = 1000, truth 10000: logarithms (base e) 2.302585·(1, 2, 3, 4);
    // spread 3·2.302585 = 6.907755, overshoot 0.690776; bins 0.690776, 2.302585, 2.302585, 2.302585 + 0.690776 = 2.993361;
    // W = 6.907755·1.2 = 8.289306.
    // I = 0.1·ln(0.1·8.289306/0.690776) + 0.8·ln(0.4·8.289306/2.302585) + 0.1·ln(0.1·8.289306/2.993361)
    //   = 0.1·ln 1.2 + 0.8·ln 1.44 + 0.1·ln(3.6/13) = 0.1815451 (the same ratios as the uniform case above).
    [Fact]
    public void InformationOf_LogUniformBackground_WorksOnLogarithms()
    {
        var items = new[] { new CalibrationItem("q1", 10000, BackgroundMeasure.LogUniform) };
        var assessments = new[] { new CalibrationAssessment("E1", "q1", new RangeAnswer(10, 100, 1000)) };

        var range = ClassicalModel.Ranges(items, assessments, 0.10)["q1"];

        Assert.Equal(BackgroundMeasure.LogUniform, range.Background);
        Assert.Equal(0.1815451, ClassicalModel.InformationOf(assessments[0].Answer, range), 1e-6);
    }

    // Common practice: a log scale needs positive values; a question with a non-positive value falls back to uniform.
    [Fact]
    public void RangeOf_LogUniformWithNonPositiveValue_FallsBackToUniform()
    {
        var range = ClassicalModel.RangeOf([-1, 5, 10], 0.10, BackgroundMeasure.LogUniform);
        Assert.Equal(BackgroundMeasure.Uniform, range.Background);
        Assert.Equal(-2.1, range.Low, 1e-12);
    }

    // Cooke (1991), ch. 12: the pool of one expert is that expert.
    [Fact]
    public void LinearPool_OneExpert_ReturnsTheExpertsQuantiles()
    {
        var range = ClassicalModel.RangeOf([0, 100], 0.10, BackgroundMeasure.Uniform);
        var pooled = LinearPool.Combine([new RangeAnswer(20, 45, 70)], [2.5], range);
        Assert.Equal(20, pooled.P10, 1e-12);
        Assert.Equal(45, pooled.P50, 1e-12);
        Assert.Equal(70, pooled.P90, 1e-12);
    }

    // Hand-worked pool of two experts, equal weights, range [−10, 110] (values 0..100, 10% overshoot).
    // A: 0 / 10 / 20; B: 80 / 90 / 100. The pooled CDF is (F_A + F_B)/2.
    // At x = 20: F_A = 0.9, F_B = 0.1·(20 + 10)/(80 + 10) = 0.0333333, pooled 0.4666667.
    // At x = 80: F_A = 0.9 + 0.1·(80 − 20)/(110 − 20) = 0.9666667, F_B = 0.1, pooled 0.5333333.
    // Between, linear: the median is 20 + (0.5 − 0.4666667)/(0.5333333 − 0.4666667)·60 = 20 + 0.5·60 = 50.
    // P10: at x = 0, F_A = 0.1, F_B = 0.1·10/90 = 0.0111111, pooled 0.0555556; at x = 10, F_A = 0.5, F_B = 0.0222222, pooled 0.2611111.
    //   P10 = 0 + (0.1 − 0.0555556)/(0.2611111 − 0.0555556)·10 = 0.0444444/0.2055556·10 = 2.162162.
    [Fact]
    public void LinearPool_TwoExperts_GivesTheHandComputedQuantiles()
    {
        var range = ClassicalModel.RangeOf([0, 100], 0.10, BackgroundMeasure.Uniform);
        var pooled = LinearPool.Combine([new RangeAnswer(0, 10, 20), new RangeAnswer(80, 90, 100)], [1, 1], range);
        Assert.Equal(2.162162, pooled.P10, 1e-5);
        Assert.Equal(50, pooled.P50, 1e-9);
        Assert.Equal(100 - 2.162162, pooled.P90, 1e-5);
    }

    // Cooke (1991), ch. 12: the pool of one expert is that expert, exactly, so a truth that sits on one of the
    // expert's quantiles falls in the same bin for the expert and for the pool (values in quarters make this common).
    // Seen before the fix: a positive weight w gave w·0.9/w ≠ 0.9 in the last bit, and the log-uniform scale gave
    // exp(ln x) ≠ x, so the pooled quantile moved by an ulp off the expert's.
    [Theory]
    [InlineData(0.6523303675869048, BackgroundMeasure.Uniform)]
    [InlineData(0.1, BackgroundMeasure.Uniform)]
    [InlineData(0.3, BackgroundMeasure.LogUniform)]
    [InlineData(7.7, BackgroundMeasure.LogUniform)]
    public void LinearPool_OneExpertAnyWeight_ReturnsTheExpertsQuantilesExactly(double weight, BackgroundMeasure background)
    {
        for (var seed = 0; seed < 200; seed++)
        {
            var random = new Random(seed);
            var p10 = random.Next(1, 400) / 4.0;
            var answer = new RangeAnswer(p10, p10 + (random.Next(0, 80) / 4.0), p10 + (random.Next(80, 160) / 4.0));
            var range = ClassicalModel.RangeOf([answer.P10, answer.P50, answer.P90, random.Next(1, 800) / 4.0], 0.10, background);

            var pooled = LinearPool.Combine([answer], [weight], range);

            Assert.Equal(answer, pooled);
        }
    }

    // Invariant (common practice for any aggregate): the result depends on the set of questions and answers, not on
    // their order. The case FsCheck found (replay (8338126655962816463,9548115295696957897,98), shrunk to seed 15,
    // 4 experts, 6 questions): only expert E0 passes the optimised cut-off, one truth equals E0's P90, and in one
    // order the weighted combination (E0 alone) counted it above P90 (as E0's own score does), in the other inside.
    [Fact]
    public void Evaluate_ShuffledPanelWithATruthOnAQuantile_ChangesNothing()
    {
        var (items, assessments) = CalibrationPanels.Random(15, experts: 4, questions: 6);
        var random = new Random(15 ^ 0x5bd1e995);
        var shuffledItems = items.ToArray();
        random.Shuffle(shuffledItems);
        var shuffledAssessments = assessments.ToArray();
        random.Shuffle(shuffledAssessments);

        var a = ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);
        var b = ClassicalModel.Evaluate(shuffledItems, shuffledAssessments, CalibrationSettings.Default);

        Assert.Equal(a.Cutoff, b.Cutoff);
        Assert.Equal(a.Weighted!.Hits, b.Weighted!.Hits);
        Assert.Equal(a.Weighted.Combined, b.Weighted.Combined);
        Assert.Equal(a.Equal.Combined, b.Equal.Combined);
        Assert.Equal(a.Experts.Select(e => (e.Score.Key, e.Score.Calibration, e.Score.Information, e.Weight)),
            b.Experts.Select(e => (e.Score.Key, e.Score.Calibration, e.Score.Information, e.Weight)));
        // The weighted combination is E0 alone here, so it scores as E0 does.
        var only = Assert.Single(a.Experts, e => e.Weight > 0);
        Assert.Equal(only.Score.Hits, a.Weighted.Hits);
    }

    // Cooke (1991), ch. 12: the optimised α is chosen among the experts' calibration scores, so it never scores below α = 0.
    [Fact]
    public void Evaluate_OptimisedCutoff_NeverScoresBelowCutoffZero()
    {
        var (items, assessments) = CalibrationPanels.Random(42, experts: 5, questions: 10);
        var optimised = ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);
        var zero = ClassicalModel.Evaluate(items, assessments, new CalibrationSettings(Cutoff: 0));
        Assert.True(optimised.Weighted!.Combined >= zero.Weighted!.Combined);
        Assert.True(optimised.Optimised);
    }

    // Cooke (1991), ch. 12: an over-confident expert (narrow bands that miss) is poorly calibrated;
    // one whose truths fall in the bins as claimed is well calibrated and carries the weight.
    [Fact]
    public void Evaluate_OverConfidentAgainstWellCalibrated_WeightsTheCalibratedExpert()
    {
        var items = Enumerable.Range(1, 10).Select(i => new CalibrationItem($"q{i}", 100 + (i % 2 == 0 ? 7 : -7))).ToList();
        var assessments = new List<CalibrationAssessment>();
        var wellBins = new[] { 0, 1, 1, 1, 1, 2, 2, 2, 2, 3 };
        foreach (var (item, i) in items.Select((x, i) => (x, i)))
        {
            // Over-confident: ±1 around 100, so every truth (93 or 107) is outside its band.
            assessments.Add(new CalibrationAssessment("over", item.Key, new RangeAnswer(99, 100, 101)));
            // Calibrated: bands placed so that the truths fall 1 / 4 / 4 / 1 in the four bins.
            var t = item.Truth;
            var answer = wellBins[i] switch
            {
                0 => new RangeAnswer(t + 2, t + 10, t + 20),
                1 => new RangeAnswer(t - 5, t + 5, t + 15),
                2 => new RangeAnswer(t - 15, t - 5, t + 5),
                _ => new RangeAnswer(t - 20, t - 10, t - 2),
            };
            assessments.Add(new CalibrationAssessment("well", item.Key, answer));
        }

        var result = ClassicalModel.Evaluate(items, assessments, CalibrationSettings.Default);
        var over = result.Experts.Single(e => e.Score.Key == "over");
        var well = result.Experts.Single(e => e.Score.Key == "well");

        Assert.Equal(1, well.Score.Calibration, 1e-12);
        Assert.True(over.Score.Calibration < 1e-6);
        Assert.True(well.Weight > 0.99);
    }

    [Fact]
    public void CalibrationOf_NoHits_Throws() =>
        Assert.Throws<ArgumentException>(() => ClassicalModel.CalibrationOf([0, 0, 0, 0]));

    // Colson & Cooke (2017): with at most the maximum of splits, every split of the training size is run.
    [Fact]
    public void CrossValidation_TenQuestionsHalfTraining_RunsAll252Splits()
    {
        var (items, assessments) = CalibrationPanels.Random(7, experts: 4, questions: 10);
        var result = CrossValidation.Run(items, assessments, CalibrationSettings.Default, trainingSize: 5);
        Assert.True(result.Exhaustive);
        Assert.Equal(252, result.Splits.Count);
        Assert.Equal(252, result.Splits.Select(s => string.Join(",", s.Training)).Distinct().Count());
        Assert.All(result.Splits, s => Assert.Equal(5, s.Equal.N));
    }

    [Fact]
    public void CrossValidation_ManySplits_DrawsARepeatableSample()
    {
        var (items, assessments) = CalibrationPanels.Random(7, experts: 3, questions: 12);
        var a = CrossValidation.Run(items, assessments, CalibrationSettings.Default, trainingSize: 6, maxSplits: 100, seed: 5);
        var b = CrossValidation.Run(items, assessments, CalibrationSettings.Default, trainingSize: 6, maxSplits: 100, seed: 5);
        Assert.False(a.Exhaustive);
        Assert.Equal(100, a.Splits.Count);
        Assert.Equal(a.Splits.Select(s => string.Join(",", s.Training)), b.Splits.Select(s => string.Join(",", s.Training)));
    }

    [Fact]
    public void CrossValidation_FewerThanEightQuestions_Throws()
    {
        var (items, assessments) = CalibrationPanels.Random(7, experts: 3, questions: 7);
        Assert.Throws<ArgumentException>(() => CrossValidation.Run(items, assessments, CalibrationSettings.Default, 3));
    }
}

/// <summary>Invented calibration panels for the tests: truths and answers drawn from a seed; values are quarters, so ties happen.</summary>
internal static class CalibrationPanels
{
    public static (List<CalibrationItem> Items, List<CalibrationAssessment> Assessments) Random(int seed, int experts, int questions)
    {
        var random = new Random(seed);
        var items = Enumerable.Range(1, questions)
            .Select(i => new CalibrationItem($"q{i}", random.Next(-400, 400) / 4.0, random.Next(4) == 0 ? BackgroundMeasure.LogUniform : BackgroundMeasure.Uniform))
            .ToList();
        var assessments = new List<CalibrationAssessment>();
        for (var e = 0; e < experts; e++)
        {
            var bias = random.Next(-40, 40) / 4.0;
            var spread = random.Next(0, 60) / 4.0;
            foreach (var item in items)
            {
                if (random.Next(10) == 0 && e > 0)
                {
                    continue;
                }

                var center = item.Truth + bias + (random.Next(-80, 80) / 4.0);
                var low = spread + (random.Next(0, 20) / 4.0);
                var high = spread + (random.Next(0, 20) / 4.0);
                assessments.Add(new CalibrationAssessment($"E{e}", item.Key, new RangeAnswer(center - low, center, center + high)));
            }
        }

        return (items, assessments);
    }
}
