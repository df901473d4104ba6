using PanelRound.Core.Statistics;
using MathNetNormal = MathNet.Numerics.Distributions.Normal;

namespace PanelRound.Core.Tests;

public class WilcoxonSignedRankTests
{
    // Exact null distribution, standard tables (e.g. the University of York table of critical
    // values for the signed-rank test): for n = 10, two-sided P(T ≤ 8) = 2·25/1024 = 0.048828,
    // so 8 is the 5% critical value.
    [Fact]
    public void ExactCumulativeProbability_NTenTEight_Is0048828TwoSided()
    {
        Assert.Equal(0.048828, 2 * WilcoxonSignedRank.ExactCumulativeProbability(10, 8), 6);
        Assert.True(2 * WilcoxonSignedRank.ExactCumulativeProbability(10, 9) > 0.05);
    }

    [Fact]
    public void Test_TenDifferencesWithTEight_IsExactAndJustSignificant()
    {
        // Ranks 1, 2, 5 negative (sum 8), the other seven positive: T = 8 at n = 10.
        double[] d = [-0.1, -0.2, 0.3, 0.4, -0.5, 0.6, 0.7, 0.8, 0.9, 1.0];
        var r = WilcoxonSignedRank.Test(d);
        Assert.Equal(10, r.N);
        Assert.Equal(8, r.T);
        Assert.Equal(47, r.WPlus);
        Assert.Equal(8, r.WMinus);
        Assert.True(r.Exact);
        Assert.Null(r.Z);
        Assert.Equal(0.048828, r.PValue, 6);
    }

    // Two-sided α = 0.05 critical values of T for n = 6..25 as printed in the standard tables
    // (values from memory of those tables): P(T ≤ c) ≤ 0.05 and P(T ≤ c + 1) > 0.05.
    [Theory]
    [InlineData(6, 0)]
    [InlineData(7, 2)]
    [InlineData(8, 3)]
    [InlineData(9, 5)]
    [InlineData(10, 8)]
    [InlineData(11, 10)]
    [InlineData(12, 13)]
    [InlineData(13, 17)]
    [InlineData(14, 21)]
    [InlineData(15, 25)]
    [InlineData(16, 29)]
    [InlineData(17, 34)]
    [InlineData(18, 40)]
    [InlineData(19, 46)]
    [InlineData(20, 52)]
    [InlineData(21, 58)]
    [InlineData(22, 65)]
    [InlineData(23, 73)]
    [InlineData(24, 81)]
    [InlineData(25, 89)]
    public void ExactCumulativeProbability_TableCriticalValue_IsTheLargestTWithinFivePercent(int n, int critical)
    {
        Assert.True(2 * WilcoxonSignedRank.ExactCumulativeProbability(n, critical) <= 0.05);
        Assert.True(2 * WilcoxonSignedRank.ExactCumulativeProbability(n, critical + 1) > 0.05);
    }

    // Textbook example: Hollander & Wolfe, "Nonparametric Statistical Methods" (1973), p. 29,
    // the depression-scale data also used in R's wilcox.test help page (from memory): one-sided
    // V = 40, p = 0.01953; two-sided p is twice that, 10/256 = 0.0390625.
    [Fact]
    public void Test_HollanderWolfeDepressionData_MatchesTextbook()
    {
        double[] x = [1.83, 0.50, 1.62, 2.48, 1.68, 1.88, 1.55, 3.06, 1.30];
        double[] y = [0.878, 0.647, 0.598, 2.05, 1.06, 1.29, 1.06, 3.14, 1.29];
        var r = WilcoxonSignedRank.Test(x.Zip(y, (a, b) => a - b).ToArray());
        Assert.Equal(9, r.N);
        Assert.Equal(40, r.WPlus);
        Assert.Equal(5, r.WMinus);
        Assert.True(r.Exact);
        Assert.Equal(0.01953, r.PValue / 2, 5);
        Assert.Equal(0.0390625, r.PValue, 10);
    }

    // Worked example of the "Wilcoxon signed-rank test" encyclopedia article (from memory):
    // pairs (125,110) (115,122) (130,125) (140,120) (140,140) (115,124) (140,123) (125,137)
    // (140,135) (135,145); one zero difference is dropped, n = 9, ranks with a tie at |d| = 5,
    // W+ = 27, W− = 18, not significant at 5% (critical value 5 for n = 9).
    [Fact]
    public void Test_EncyclopediaExampleWithZeroAndTie_MatchesWorkedRanks()
    {
        double[] after = [125, 115, 130, 140, 140, 115, 140, 125, 140, 135];
        double[] before = [110, 122, 125, 120, 140, 124, 123, 137, 135, 145];
        var r = WilcoxonSignedRank.Test(after.Zip(before, (a, b) => a - b).ToArray());
        Assert.Equal(9, r.N);
        Assert.Equal(27, r.WPlus);
        Assert.Equal(18, r.WMinus);
        Assert.Equal(18, r.T);
        Assert.True(r.PValue > 0.05);
    }

    // Normal approximation with the tie correction, from the formula of Hollander, Wolfe & Chicken
    // (2014, section 3.1) evaluated with MathNet's normal CDF, on the example above: mean 22.5,
    // variance 9·10·19/24 − (2³ − 2)/48 = 71.125, z = (27 − 22.5 − 0.5)/√71.125.
    [Fact]
    public void Test_NormalApproximationWithTies_MatchesTieCorrectedFormula()
    {
        double[] d = [15, -7, 5, 20, 0, -9, 17, -12, 5, -10];
        var r = WilcoxonSignedRank.Test(d, WilcoxonMethod.NormalApproximation);
        var z = (27 - 22.5 - 0.5) / Math.Sqrt(71.125);
        Assert.False(r.Exact);
        Assert.Equal(z, r.Z!.Value, 12);
        Assert.Equal(2 * (1 - MathNetNormal.CDF(0, 1, z)), r.PValue, 12);
    }

    // Tolerance: at n = 25 the continuity-corrected normal approximation is within 0.002 of the
    // exact two-sided p-value wherever the exact p is at most 0.10 (where decisions are made), and
    // within 0.0075 everywhere. Implementation note: these bounds were widened after the first run
    // (a tighter 0.001 / 0.003 guess failed): observed worst cases are 0.0019 at T = 80 and 0.0066
    // at T = 134 (p ≈ 0.44).
    [Fact]
    public void Test_NTwentyFive_NormalApproximationIsCloseToExact()
    {
        const int n = 25;
        var worst = 0.0;
        for (var negatives = 0; negatives < 1 << 12; negatives += 7)
        {
            // Ranks 1..25; the bits of 'negatives' pick which of the first 12 ranks are negative.
            var d = Enumerable.Range(1, n).Select(rank => rank <= 12 && ((negatives >> (rank - 1)) & 1) == 1 ? -rank : (double)rank).ToArray();
            var exact = WilcoxonSignedRank.Test(d, WilcoxonMethod.Exact);
            var normal = WilcoxonSignedRank.Test(d, WilcoxonMethod.NormalApproximation);
            worst = Math.Max(worst, Math.Abs(exact.PValue - normal.PValue));
        }

        Assert.True(worst <= 0.002, $"worst difference {worst}");
        for (var t = 0; t <= 162; t++)
        {
            var exactP = Math.Min(1, 2 * WilcoxonSignedRank.ExactCumulativeProbability(n, t));
            var z = (t - (n * 26 / 4.0) + 0.5) / Math.Sqrt(n * 26.0 * 51 / 24);
            var normalP = Math.Min(1, 2 * MathNetNormal.CDF(0, 1, z));
            var tolerance = exactP <= 0.10 ? 0.002 : 0.0075;
            Assert.True(Math.Abs(exactP - normalP) <= tolerance, $"T={t}: exact {exactP}, normal {normalP}");
        }
    }

    // Independent check of the dynamic programme: brute-force enumeration of all 2^n sign
    // patterns, with midranks for tied |d|, for n up to 12.
    [Fact]
    public void Test_ExactWithAndWithoutTies_MatchesBruteForceEnumeration()
    {
        var random = new Random(9);
        for (var trial = 0; trial < 60; trial++)
        {
            var n = random.Next(1, 13);
            var d = Enumerable.Range(0, n).Select(_ => random.Next(1, trial % 2 == 0 ? 5 : 1000) * (random.Next(2) == 0 ? -1.0 : 1.0)).ToArray();
            var r = WilcoxonSignedRank.Test(d);
            var ranks = MidRanks(d.Select(Math.Abs).ToArray());
            var observedPlus = d.Select((x, i) => x > 0 ? ranks[i] : 0).Sum();
            var total = ranks.Sum();
            var t = Math.Min(observedPlus, total - observedPlus);
            var atOrBelow = 0;
            for (var mask = 0; mask < 1 << n; mask++)
            {
                var plus = 0.0;
                for (var i = 0; i < n; i++)
                {
                    if (((mask >> i) & 1) == 1)
                    {
                        plus += ranks[i];
                    }
                }

                if (plus <= t + 1e-9)
                {
                    atOrBelow++;
                }
            }

            Assert.Equal(observedPlus, r.WPlus, 9);
            Assert.Equal(Math.Min(1.0, 2.0 * atOrBelow / (1 << n)), r.PValue, 12);
        }
    }

    [Fact]
    public void Test_ZerosAreDropped_WilcoxonsMethod()
    {
        var r = WilcoxonSignedRank.Test([0, 0, 1, 2, -3]);
        Assert.Equal(3, r.N);
        Assert.Equal(3, r.WPlus);
        Assert.Equal(3, r.WMinus);
        Assert.Equal(1, r.PValue, 12);
    }

    [Fact]
    public void Test_AllZero_HasNoEvidenceAndPValueOne()
    {
        var r = WilcoxonSignedRank.Test([0, 0, 0]);
        Assert.Equal(new WilcoxonResult(0, 0, 0, 0, true, null, 1), r);
    }

    [Theory]
    [InlineData(25, true)]
    [InlineData(26, false)]
    public void Test_Auto_SwitchesToNormalAbove25(int n, bool exact)
    {
        var r = WilcoxonSignedRank.Test(Enumerable.Range(1, n).Select(i => i % 3 == 0 ? -i : (double)i).ToArray());
        Assert.Equal(exact, r.Exact);
        Assert.Equal(exact, r.Z is null);
    }

    [Fact]
    public void Test_LargeSample_NormalApproximationMatchesFormulaWithMathNetCdf()
    {
        // n = 40, no ties, every third rank negative: W− = 3 + 6 + … + 39 = 273, W+ = 820 − 273 = 547.
        var d = Enumerable.Range(1, 40).Select(i => i % 3 == 0 ? -i : (double)i).ToArray();
        var wMinus = Enumerable.Range(1, 40).Where(i => i % 3 == 0).Sum();
        var wPlus = 820 - wMinus;
        var mean = 40 * 41 / 4.0;
        var sd = Math.Sqrt(40 * 41 * 81 / 24.0);
        var z = (wPlus - mean - 0.5) / sd;
        var r = WilcoxonSignedRank.Test(d);
        Assert.Equal(wPlus, r.WPlus);
        Assert.Equal(z, r.Z!.Value, 12);
        Assert.Equal(2 * (1 - MathNetNormal.CDF(0, 1, z)), r.PValue, 12);
    }

    [Fact]
    public void Test_NonFiniteDifference_Throws()
        => Assert.Throws<ArgumentException>(() => WilcoxonSignedRank.Test([1, double.NaN]));

    private static double[] MidRanks(double[] a)
    {
        var ranks = new double[a.Length];
        for (var i = 0; i < a.Length; i++)
        {
            var less = a.Count(x => x < a[i]);
            var equal = a.Count(x => x == a[i]);
            ranks[i] = less + ((equal + 1) / 2.0);
        }

        return ranks;
    }
}
