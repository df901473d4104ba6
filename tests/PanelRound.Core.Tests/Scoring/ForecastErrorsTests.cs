using MathNet.Numerics;
using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

public class ForecastErrorsTests
{
    // Worked example of the issue; definitions of Hyndman & Koehler (2006), section 3.
    private static readonly double[] Outcomes = [112, 118, 132, 129, 121, 135];
    private static readonly double[] Forecasts = [120, 115, 128, 133, 118, 140];

    private static (double[] Forecasts, double[] Outcomes) Generated(int seed, int n)
    {
        var random = new Random(seed);
        var y = Enumerable.Range(0, n).Select(_ => 1000 + (random.NextDouble() * 4000)).ToArray();
        var f = y.Select(v => v + ((random.NextDouble() - 0.4) * 300)).ToArray();
        return (f, y);
    }

    [Theory]
    [InlineData(1, 1)]
    [InlineData(2, 7)]
    [InlineData(3, 250)]
    public void MaeAndMse_GeneratedData_MatchMathNetDistance(int seed, int n)
    {
        var (f, y) = Generated(seed, n);
        Assert.Equal(Distance.MAE(f, y), ForecastErrors.Mae(f, y), 9);
        Assert.Equal(Distance.MSE(f, y), ForecastErrors.Mse(f, y), 6);
        Assert.Equal(Math.Sqrt(Distance.MSE(f, y)), ForecastErrors.Rmse(f, y), 9);
    }

    [Theory]
    [InlineData(4, 1)]
    [InlineData(5, 40)]
    public void Summarise_GeneratedData_MaeAndRmseMatchMathNetDistance(int seed, int n)
    {
        var (f, y) = Generated(seed, n);
        var summary = ForecastErrors.Summarise(TestItems.Points(f, y));
        Assert.Equal(n, summary.N);
        Assert.Equal(Distance.MAE(f, y), summary.Mae!.Value, 9);
        Assert.Equal(Distance.MSE(f, y), summary.Rmse!.Value * summary.Rmse.Value, 6);
        Assert.Equal(MathNet.Numerics.Statistics.Statistics.Mean(f.Zip(y, (a, b) => a - b)), summary.MeanError!.Value, 9);
    }

    [Fact]
    public void PointMeasures_WorkedExample_MatchHyndmanKoehlerDefinitions()
    {
        // Issue reference check: MAE 4.5, RMSE 4.813176, MAPE 3.666558 %, mean error (f − y) 1.166667.
        Assert.Equal(4.5, ForecastErrors.Mae(Forecasts, Outcomes), 12);
        Assert.Equal(4.813176, ForecastErrors.Rmse(Forecasts, Outcomes), 6);
        Assert.Equal(3.666558, ForecastErrors.Mape(Forecasts, Outcomes)!.Value, 6);
        Assert.Equal(1.166667, ForecastErrors.MeanError(Forecasts, Outcomes), 6);
    }

    [Fact]
    public void Summarise_WorkedExample_MatchesHyndmanKoehlerDefinitions()
    {
        var s = ForecastErrors.Summarise(TestItems.Points(Forecasts, Outcomes));
        Assert.Equal(6, s.N);
        Assert.Equal(4.5, s.Mae!.Value, 12);
        Assert.Equal(4.813176, s.Rmse!.Value, 6);
        Assert.Equal(6, s.NMape);
        Assert.Equal(3.666558, s.Mape!.Value, 6);
        Assert.Equal(1.166667, s.MeanError!.Value, 6);
    }

    [Fact]
    public void Mase_WorkedExample_IsOneHalf()
    {
        // Issue reference check (Hyndman & Koehler 2006, section 3.4): training [100, 104, 103, 107, 110]
        // has naive MAE (4 + 1 + 4 + 3) / 4 = 3; errors 1 and 2 give MAE 1.5; MASE 0.5.
        double[] training = [100, 104, 103, 107, 110];
        Assert.Equal(3, NaiveScale.InSampleNaiveMae(training).Value, 12);
        Assert.Equal(0.5, ForecastErrors.Mase(training, [112, 115], [111, 113])!.Value, 12);
    }

    [Fact]
    public void Summarise_WorkedMaseExample_ScaledMaeIsOneHalf()
    {
        var scale = NaiveScale.InSampleNaiveMae([100, 104, 103, 107, 110]).Value;
        var s = ForecastErrors.Summarise(TestItems.Points([111, 113], [112, 115], scale));
        Assert.Equal(2, s.NScaled);
        Assert.Equal(0.5, s.ScaledMae!.Value, 12);
        Assert.Equal(-0.5, s.ScaledMeanError!.Value, 12);
    }

    [Fact]
    public void Mase_ConstantTrainingSeries_IsNull()
    {
        Assert.Null(ForecastErrors.Mase([5, 5, 5], [6], [7]));
    }

    [Theory]
    // Gneiting & Raftery (2007), section 6.2, eq. (43), the reference values.
    [InlineData(90, 110, 0.2, 115, 70)]
    [InlineData(90, 110, 0.1, 85, 120)]
    // Inside the interval the score is the width; on an end, too.
    [InlineData(90, 110, 0.2, 100, 20)]
    [InlineData(90, 110, 0.2, 110, 20)]
    public void IntervalScore_ReferenceValues(double l, double u, double alpha, double y, double expected)
    {
        Assert.Equal(expected, ForecastErrors.IntervalScore(l, u, alpha, y), 12);
    }

    [Theory]
    // τ(y − q) if y ≥ q, else (1 − τ)(q − y): the quantile loss (Gneiting & Raftery 2007, section 6; section number from memory). Values by hand.
    [InlineData(100, 0.9, 110, 9)]
    [InlineData(100, 0.9, 90, 1)]
    [InlineData(100, 0.1, 90, 9)]
    [InlineData(100, 0.5, 96, 2)]
    [InlineData(100, 0.3, 100, 0)]
    public void PinballLoss_HandValues(double q, double tau, double y, double expected)
    {
        Assert.Equal(expected, ForecastErrors.PinballLoss(q, tau, y), 12);
    }

    [Theory]
    [InlineData(11, 0.2)]
    [InlineData(12, 0.1)]
    [InlineData(13, 0.5)]
    public void IntervalScore_GeneratedValues_EqualsScaledPinballLossOfItsEnds(int seed, double alpha)
    {
        // Identity (Gneiting & Raftery 2007, section 6.2): IS_α(l, u; y) = (2/α)·[ρ_{α/2}(l; y) + ρ_{1−α/2}(u; y)].
        var random = new Random(seed);
        for (var i = 0; i < 200; i++)
        {
            var l = (random.NextDouble() * 200) - 100;
            var u = l + (random.NextDouble() * 50);
            var y = (random.NextDouble() * 300) - 150;
            var viaPinball = 2 / alpha * (ForecastErrors.PinballLoss(l, alpha / 2, y) + ForecastErrors.PinballLoss(u, 1 - (alpha / 2), y));
            Assert.Equal(viaPinball, ForecastErrors.IntervalScore(l, u, alpha, y), 9);
        }
    }

    [Fact]
    public void Summarise_RangeItems_CoverageIntervalScoreAndPinballByHand()
    {
        // Outcome inside, on the upper end (inclusive), below and above [P10, P90].
        var items = new[]
        {
            TestItems.Range(90, 100, 110, 100, scale: 10, period: "2025"),
            TestItems.Range(90, 100, 110, 110, scale: 10, period: "2026"),
            TestItems.Range(90, 100, 110, 85, scale: 10, period: "2027"),
            TestItems.Range(90, 100, 110, 115, scale: double.NaN, period: "2028"),
        };
        var s = ForecastErrors.Summarise(items);
        Assert.Equal(4, s.NRange);
        Assert.Equal(0.5, s.Coverage!.Value, 12);

        // Interval scores (α = 0.2): 20, 20, 20 + 10·5 = 70, 20 + 10·5 = 70 → mean 45.
        Assert.Equal(45, s.IntervalScore!.Value, 12);

        // Pinball P10 (τ = 0.1): 1, 2, 0.9·5 = 4.5, 2.5 → 2.5; P50: 0, 5, 7.5, 7.5 → 5; P90 (τ = 0.9): 0.1·10 = 1, 0, 0.1·25 = 2.5, 0.9·5 = 4.5 → 2.
        Assert.Equal(2.5, s.PinballLoss!.P10, 12);
        Assert.Equal(5, s.PinballLoss.P50, 12);
        Assert.Equal(2, s.PinballLoss.P90, 12);
        Assert.Equal((2.5 + 5 + 2) / 3, s.PinballLoss.Mean, 12);

        // Scaled over the three items with scale 10: IS 2, 2, 7 → 11/3.
        Assert.Equal(3, s.NRangeScaled);
        Assert.Equal(11.0 / 3, s.ScaledIntervalScore!.Value, 12);
        Assert.Equal((0.1 + 0.2 + 0.45) / 3, s.ScaledPinballLoss!.P10, 12);

        // Point measures use P50: errors 0, −10, 15, −15.
        Assert.Equal(10, s.Mae!.Value, 12);
        Assert.Equal(-2.5, s.MeanError!.Value, 12);
    }

    [Fact]
    public void Summarise_WithNaiveForecast_SkillIsOneMinusMaeRatio()
    {
        // Skill = 1 − MAE / MAE of the no-change forecast on the same items; naive forecast 110 throughout.
        var naive = Enumerable.Repeat(110.0, Outcomes.Length).ToArray();
        var s = ForecastErrors.Summarise(TestItems.Points(Forecasts, Outcomes, scale: 3, naive: 110));
        var expected = 1 - (Distance.MAE(Forecasts, Outcomes) / Distance.MAE(naive, Outcomes));
        Assert.Equal(6, s.NNaive);
        Assert.Equal(14.5, s.NaiveMae!.Value, 12);
        Assert.Equal(expected, s.Skill!.Value, 12);
        Assert.Equal(1 - (4.5 / 14.5), s.Skill.Value, 12);

        // One scale for all: the scaled skill equals the unscaled one.
        Assert.Equal(6, s.NScaledNaive);
        Assert.Equal(14.5 / 3, s.ScaledNaiveMae!.Value, 12);
        Assert.Equal(expected, s.ScaledSkill!.Value, 12);
    }

    [Fact]
    public void Summarise_NaiveForecastPerfect_SkillIsNull()
    {
        var s = ForecastErrors.Summarise([TestItems.Point(5, 4, naive: 4), TestItems.Point(3, 4, naive: 4, period: "2026")]);
        Assert.Equal(0.0, s.NaiveMae!.Value);
        Assert.Null(s.Skill);
    }

    [Fact]
    public void Summarise_SkillUsesOnlyItemsWithNaiveForecast()
    {
        // Second item has no naive forecast: skill on the first only, 1 − 2/4 = 0.5; MAE over both.
        var s = ForecastErrors.Summarise([TestItems.Point(12, 10, naive: 14), TestItems.Point(30, 10, period: "2026")]);
        Assert.Equal(11, s.Mae!.Value, 12);
        Assert.Equal(1, s.NNaive);
        Assert.Equal(0.5, s.Skill!.Value, 12);
    }

    [Fact]
    public void Summarise_ZeroOutcome_LeftOutOfMapeOnly()
    {
        var s = ForecastErrors.Summarise([TestItems.Point(1, 0), TestItems.Point(110, 100, period: "2026")]);
        Assert.Equal(2, s.N);
        Assert.Equal(1, s.NMape);
        Assert.Equal(10, s.Mape!.Value, 12);
        Assert.Equal(5.5, s.Mae!.Value, 12);
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(0)]
    [InlineData(-1)]
    [InlineData(double.PositiveInfinity)]
    public void Summarise_InvalidScale_LeftOutOfScaledFiguresOnly(double badScale)
    {
        var s = ForecastErrors.Summarise([TestItems.Point(12, 10, scale: 4), TestItems.Point(20, 10, scale: badScale, period: "2026")]);
        Assert.Equal(2, s.N);
        Assert.Equal(6, s.Mae!.Value, 12);
        Assert.Equal(1, s.NScaled);
        Assert.Equal(0.5, s.ScaledMae!.Value, 12);
    }

    [Fact]
    public void Summarise_Empty_AllMeasuresNull()
    {
        var s = ForecastErrors.Summarise([]);
        Assert.Equal(0, s.N);
        Assert.Null(s.Mae);
        Assert.Null(s.Rmse);
        Assert.Null(s.Mape);
        Assert.Null(s.ScaledMae);
        Assert.Null(s.Coverage);
        Assert.Null(s.PinballLoss);
        Assert.Null(s.Skill);
    }

    [Fact]
    public void Summarise_ItemWithBothForms_Throws()
    {
        var bad = TestItems.Point(5, 4) with { P10 = 1, P50 = 2, P90 = 3 };
        Assert.Throws<ArgumentException>(() => ForecastErrors.Summarise([bad]));
    }

    [Fact]
    public void Summarise_UnorderedRange_Throws()
    {
        Assert.Throws<ArgumentException>(() => ForecastErrors.Summarise([TestItems.Range(3, 2, 4, 1)]));
    }

    [Fact]
    public void ScoredItem_NonFiniteOutcome_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => TestItems.Point(5, double.NaN));
    }

    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(double.NaN)]
    public void IntervalScore_AlphaOutsideOpenUnitInterval_Throws(double alpha)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => ForecastErrors.IntervalScore(1, 2, alpha, 1.5));
    }

    [Fact]
    public void Mae_MismatchedLengths_Throws()
    {
        Assert.Throws<ArgumentException>(() => ForecastErrors.Mae([1, 2], [1]));
    }
}
