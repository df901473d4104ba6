namespace PanelRound.Core.Statistics;

/// <summary>How <see cref="WilcoxonSignedRank.Test(IReadOnlyList{double}, WilcoxonMethod)"/> computes its p-value.</summary>
public enum WilcoxonMethod
{
    /// <summary>Exact for up to <see cref="WilcoxonSignedRank.ExactLimit"/> non-zero differences, the normal approximation above.</summary>
    Auto,

    /// <summary>The exact permutation distribution (allowed up to <see cref="WilcoxonSignedRank.ExactMaximum"/> non-zero differences).</summary>
    Exact,

    /// <summary>The normal approximation with tie and continuity corrections.</summary>
    NormalApproximation,
}

/// <summary>The result of a Wilcoxon signed-rank test.</summary>
/// <param name="N">The number of non-zero differences (zeros are dropped).</param>
/// <param name="WPlus">The sum of the ranks of |d| over positive differences (midranks for ties).</param>
/// <param name="WMinus">The sum of the ranks over negative differences; WPlus + WMinus = N(N + 1)/2.</param>
/// <param name="T">min(WPlus, WMinus), the statistic of the standard tables.</param>
/// <param name="Exact">True when the p-value comes from the exact distribution.</param>
/// <param name="Z">The continuity-corrected standard score of WPlus when the normal approximation is used, else null. Positive when the positive differences dominate.</param>
/// <param name="PValue">The two-sided p-value, in [0, 1].</param>
public sealed record WilcoxonResult(int N, double WPlus, double WMinus, double T, bool Exact, double? Z, double PValue);

/// <summary>The Wilcoxon signed-rank test of paired differences against a median of zero.</summary>
/// <remarks>
/// <para>Source: F. Wilcoxon, "Individual comparisons by ranking methods", Biometrics Bulletin 1(6),
/// 80–83, 1945.</para>
/// <para>Zeros: differences equal to 0 are dropped before ranking (Wilcoxon's original method, as
/// opposed to Pratt's 1959 variant); N counts the non-zero differences. With N = 0 the result is
/// WPlus = WMinus = T = 0 with p-value 1.</para>
/// <para>Ties: tied |d| receive their average rank (midranks).</para>
/// <para>Exact p-value (N ≤ 25 by default): the permutation distribution of WPlus given the observed
/// ranks, under which each rank carries a + or − sign with probability 1/2, computed by dynamic
/// programming over doubled ranks (integers even with midranks). Without ties it is the classic
/// null distribution of the standard tables; with ties it is the exact conditional distribution
/// on the midranks. Two-sided p = min(1, 2·P(W ≤ T)), the distribution being symmetric.</para>
/// <para>Normal approximation (N &gt; 25): mean N(N+1)/4, variance N(N+1)(2N+1)/24 − Σ(t³ − t)/48 over
/// tie groups of size t; continuity correction of 0.5 towards the mean (as R's <c>wilcox.test</c>
/// with <c>correct = TRUE</c>); two-sided p = 2·(1 − Φ(|z|)). See e.g. Hollander, Wolfe &amp; Chicken,
/// "Nonparametric Statistical Methods", 3rd ed., Wiley, 2014, section 3.1.</para>
/// </remarks>
public static class WilcoxonSignedRank
{
    /// <summary>The largest number of non-zero differences for which <see cref="WilcoxonMethod.Auto"/> is exact: 25.</summary>
    public const int ExactLimit = 25;

    /// <summary>The largest number of non-zero differences <see cref="WilcoxonMethod.Exact"/> accepts: 200.</summary>
    public const int ExactMaximum = 200;

    /// <summary>Tests the differences (e.g. current − previous answer per expert) with <see cref="WilcoxonMethod.Auto"/>.</summary>
    /// <param name="differences">Finite paired differences, in any order; may be empty.</param>
    public static WilcoxonResult Test(IReadOnlyList<double> differences) => Test(differences, WilcoxonMethod.Auto);

    /// <summary>Tests the differences with the chosen way of computing the p-value.</summary>
    /// <param name="differences">Finite paired differences, in any order; may be empty.</param>
    /// <param name="method">Exact, normal approximation, or automatic by N.</param>
    public static WilcoxonResult Test(IReadOnlyList<double> differences, WilcoxonMethod method)
    {
        Preconditions.CheckAllFinite(differences);
        if (!Enum.IsDefined(method))
        {
            throw new ArgumentOutOfRangeException(nameof(method), method, "Unknown method.");
        }

        var absolute = new List<(double Abs, bool Positive)>(differences.Count);
        for (var i = 0; i < differences.Count; i++)
        {
            var d = differences[i];
            if (d != 0)
            {
                absolute.Add((Math.Abs(d), d > 0));
            }
        }

        var n = absolute.Count;
        if (n == 0)
        {
            return new WilcoxonResult(0, 0, 0, 0, true, null, 1);
        }

        absolute.Sort((a, b) => a.Abs.CompareTo(b.Abs));

        // Doubled midranks are integers: a tie group over 1-based ranks i..j has doubled rank i + j.
        var doubledRanks = new int[n];
        var tieCorrection = 0.0;
        long doubledWPlus = 0;
        for (var start = 0; start < n;)
        {
            var end = start;
            while (end + 1 < n && absolute[end + 1].Abs == absolute[start].Abs)
            {
                end++;
            }

            var doubled = start + 1 + end + 1;
            var t = end - start + 1;
            tieCorrection += ((double)t * t * t) - t;
            for (var i = start; i <= end; i++)
            {
                doubledRanks[i] = doubled;
                if (absolute[i].Positive)
                {
                    doubledWPlus += doubled;
                }
            }

            start = end + 1;
        }

        long doubledTotal = (long)n * (n + 1);
        var doubledWMinus = doubledTotal - doubledWPlus;
        var wPlus = doubledWPlus / 2.0;
        var wMinus = doubledWMinus / 2.0;
        var t0 = Math.Min(wPlus, wMinus);

        var exact = method switch
        {
            WilcoxonMethod.Exact => true,
            WilcoxonMethod.NormalApproximation => false,
            _ => n <= ExactLimit,
        };

        if (exact)
        {
            if (n > ExactMaximum)
            {
                throw new ArgumentException($"The exact distribution is offered up to {ExactMaximum} non-zero differences; there are {n}.", nameof(differences));
            }

            var p = ExactTwoSided(doubledRanks, Math.Min(doubledWPlus, doubledWMinus));
            return new WilcoxonResult(n, wPlus, wMinus, t0, true, null, p);
        }

        var mean = n * (n + 1) / 4.0;
        var variance = (n * (n + 1.0) * ((2.0 * n) + 1) / 24.0) - (tieCorrection / 48.0);
        var deviation = wPlus - mean;
        var corrected = deviation == 0 ? 0 : deviation - (0.5 * Math.Sign(deviation));
        if (Math.Sign(corrected) != Math.Sign(deviation))
        {
            corrected = 0;
        }

        var z = corrected / Math.Sqrt(variance);
        var pValue = Math.Min(1.0, 2 * NormalDistribution.UpperTailProbability(Math.Abs(z)));
        return new WilcoxonResult(n, wPlus, wMinus, t0, false, z, pValue);
    }

    /// <summary>
    /// The exact null probability P(W ≤ t) for N untied differences, from the distribution of the
    /// standard tables (ranks 1..N, each signed + or − with probability 1/2).
    /// </summary>
    /// <param name="n">The number of non-zero differences, 1 to <see cref="ExactMaximum"/>.</param>
    /// <param name="t">The statistic; any real (the distribution lives on integers 0..N(N+1)/2).</param>
    public static double ExactCumulativeProbability(int n, double t)
    {
        Preconditions.CheckInRange(n, 1, ExactMaximum);
        Preconditions.CheckFinite(t);
        var doubledRanks = new int[n];
        for (var i = 0; i < n; i++)
        {
            doubledRanks[i] = 2 * (i + 1);
        }

        var limit = Math.Floor(2 * t);
        return CumulativeDoubled(doubledRanks, limit < 0 ? -1 : (long)Math.Min(limit, (long)n * (n + 1)));
    }

    private static double ExactTwoSided(int[] doubledRanks, long doubledT)
        => Math.Min(1.0, 2 * CumulativeDoubled(doubledRanks, doubledT));

    /// <summary>P(sum of randomly signed doubled ranks over the positive ones ≤ limit).</summary>
    private static double CumulativeDoubled(int[] doubledRanks, long limit)
    {
        if (limit < 0)
        {
            return 0;
        }

        var total = 0L;
        foreach (var r in doubledRanks)
        {
            total += r;
        }

        if (limit >= total)
        {
            return 1;
        }

        // counts[s] = number of sign assignments whose positive doubled ranks sum to s. Doubles
        // hold these counts exactly up to 2^53 (N ≤ 52) and with relative error ~1e-16 beyond.
        var counts = new double[total + 1];
        counts[0] = 1;
        var reach = 0L;
        foreach (var r in doubledRanks)
        {
            reach += r;
            for (var s = reach; s >= r; s--)
            {
                counts[s] += counts[s - r];
            }
        }

        var below = 0.0;
        for (var s = 0; s <= limit; s++)
        {
            below += counts[s];
        }

        return Math.Min(1.0, below / Math.Pow(2, doubledRanks.Length));
    }
}
