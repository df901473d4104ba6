using FsCheck;
using FsCheck.Xunit;
using MathNet.Numerics;
using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

/// <summary>FsCheck properties of the scoring. Integers scaled by 1/4 give exact fractions and ties.</summary>
public class ScoringPropertyTests
{
    private static bool Close(double a, double b, double scale) => Math.Abs(a - b) <= 1e-9 * (1 + Math.Abs(scale));

    [Property(MaxTest = 300)]
    public bool IntervalScore_IsAtLeastTheWidth(int a, int b, int y, byte alphaPercent)
    {
        var (l, u) = (Math.Min(a, b) / 4.0, Math.Max(a, b) / 4.0);
        var alpha = (1 + (alphaPercent % 98)) / 100.0;
        return ForecastErrors.IntervalScore(l, u, alpha, y / 4.0) >= u - l;
    }

    [Property(MaxTest = 300)]
    public bool IntervalScore_EqualsPinballIdentity(int a, int b, int y, byte alphaPercent)
    {
        // Gneiting & Raftery (2007), section 6.2: IS_α = (2/α)·[ρ_{α/2}(l) + ρ_{1−α/2}(u)].
        var (l, u) = (Math.Min(a, b) / 4.0, Math.Max(a, b) / 4.0);
        var alpha = (1 + (alphaPercent % 98)) / 100.0;
        var yy = y / 4.0;
        var score = ForecastErrors.IntervalScore(l, u, alpha, yy);
        var viaPinball = 2 / alpha * (ForecastErrors.PinballLoss(l, alpha / 2, yy) + ForecastErrors.PinballLoss(u, 1 - (alpha / 2), yy));
        return Close(score, viaPinball, score);
    }

    [Property(MaxTest = 300)]
    public bool PinballLoss_IsNonNegativeAndZeroAtTheOutcome(int q, int y, byte tauPercent)
    {
        var tau = (tauPercent % 101) / 100.0;
        return ForecastErrors.PinballLoss(q / 4.0, tau, y / 4.0) >= 0 && ForecastErrors.PinballLoss(y / 4.0, tau, y / 4.0) == 0;
    }

    [Property(MaxTest = 200)]
    public bool Summarise_Mae_EqualsMathNetDistance(NonEmptyArray<int> fs, int seed)
    {
        var f = fs.Get.Select(x => x / 4.0).ToArray();
        var random = new Random(seed);
        var y = f.Select(_ => random.Next(-1000, 1000) / 4.0).ToArray();
        var s = ForecastErrors.Summarise(TestItems.Points(f, y));
        return Close(s.Mae!.Value, Distance.MAE(f, y), Distance.MAE(f, y)) && Close(s.Rmse!.Value * s.Rmse.Value, Distance.MSE(f, y), Distance.MSE(f, y));
    }

    [Property(MaxTest = 200)]
    public bool Summarise_ScaledFigures_DoNotDependOnTheUnit(NonEmptyArray<int> fs, int seed, PositiveInt unit)
    {
        // Scaled errors are unit-free (Hyndman & Koehler 2006, section 3.4): multiplying forecasts,
        // outcomes and scale by the same factor leaves them unchanged.
        var random = new Random(seed);
        var f = fs.Get.Select(x => x / 4.0).ToArray();
        var y = f.Select(_ => random.Next(-1000, 1000) / 4.0).ToArray();
        var c = unit.Get;
        var a = ForecastErrors.Summarise(TestItems.Points(f, y, scale: 3));
        var b = ForecastErrors.Summarise(TestItems.Points([.. f.Select(v => v * c)], [.. y.Select(v => v * c)], scale: 3.0 * c));
        return Close(a.ScaledMae!.Value, b.ScaledMae!.Value, a.ScaledMae.Value)
            && Close(a.ScaledMeanError!.Value, b.ScaledMeanError!.Value, a.ScaledMae.Value)
            && Close(a.Mape ?? 0, b.Mape ?? 0, a.Mape ?? 0);
    }

    [Property(MaxTest = 300)]
    public bool Compute_WeightsArePositiveAndSumToOne(NonEmptyArray<PositiveInt> ns, int seed, byte k, byte newcomers)
    {
        var random = new Random(seed);
        var records = ns.Get.Select((n, i) => new ExpertRecord($"E{i}", n.Get % 200, random.Next(0, 400) / 100.0)).ToArray();
        var panel = records.Select(r => r.ExpertKey).Concat(Enumerable.Range(0, newcomers % 4).Select(i => $"New{i}")).ToArray();
        var set = TrackRecordWeights.Compute(records, panel, k % 20);
        return set.Experts.Count == panel.Length
            && set.Experts.All(e => e.Weight > 0 && double.IsFinite(e.Weight))
            && Math.Abs(set.Experts.Sum(e => e.Weight) - 1) < 1e-12;
    }

    [Property(MaxTest = 300)]
    public bool Compute_LowerErrorNeverGetsLessWeightAtEqualN(PositiveInt n, byte e1, byte e2, byte k)
    {
        var records = new[] { new ExpertRecord("A", 1 + (n.Get % 100), e1 / 50.0), new ExpertRecord("B", 1 + (n.Get % 100), e2 / 50.0) };
        var set = TrackRecordWeights.Compute(records, ["A", "B"], k % 20);
        return (e1 <= e2) == (set.WeightOf("A") >= set.WeightOf("B")) || e1 == e2;
    }

    [Property(MaxTest = 200)]
    public bool Coverage_IsTheShareOfOutcomesInsideTheRange(NonEmptyArray<int> ys)
    {
        var items = ys.Get.Select((y, i) => TestItems.Range(-10, 0, 10, y % 30, period: (2000 + (i % 150)).ToString(System.Globalization.CultureInfo.InvariantCulture))).ToArray();
        var inside = ys.Get.Count(y => Math.Abs(y % 30) <= 10);
        return ForecastErrors.Summarise(items).Coverage == (double)inside / ys.Get.Length;
    }
}
