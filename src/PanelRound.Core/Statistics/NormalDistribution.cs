namespace PanelRound.Core.Statistics;

/// <summary>The standard normal distribution function, accurate to about 1e-15 absolute.</summary>
/// <remarks>
/// For |z| ≤ 3, Marsaglia's Taylor series Φ(z) = 1/2 + φ(z)·(z + z³/3 + z⁵/(3·5) + …), whose
/// terms are all of one sign (G. Marsaglia, "Evaluating the normal distribution", Journal of
/// Statistical Software 11(4), 2004). Beyond, the upper tail by Laplace's continued fraction
/// Q(z) = φ(z) / (z + 1/(z + 2/(z + 3/(z + …)))), evaluated bottom-up, which keeps relative
/// accuracy far into the tail (Abramowitz &amp; Stegun 26.2.14).
/// </remarks>
internal static class NormalDistribution
{
    private const double LogSqrtTwoPi = 0.91893853320467274178;

    /// <summary>Φ(z) = P(Z ≤ z).</summary>
    public static double Cdf(double z)
    {
        if (z < -3)
        {
            return UpperTail(-z);
        }

        return z > 3 ? 1 - UpperTail(z) : SeriesCdf(z);
    }

    /// <summary>1 − Φ(z) = P(Z &gt; z), without cancellation for large z.</summary>
    public static double UpperTailProbability(double z) => z > 3 ? UpperTail(z) : z < -3 ? 1 - UpperTail(-z) : 1 - SeriesCdf(z);

    private static double SeriesCdf(double z)
    {
        double sum = z, term = z, previous = 0, q = z * z;
        for (var i = 1.0; sum != previous; )
        {
            previous = sum;
            i += 2;
            term *= q / i;
            sum += term;
        }

        return 0.5 + (sum * Math.Exp((-0.5 * q) - LogSqrtTwoPi));
    }

    private static double UpperTail(double z)
    {
        if (z > 40)
        {
            return 0;
        }

        var fraction = z;
        for (var k = 120; k >= 1; k--)
        {
            fraction = z + (k / fraction);
        }

        return Math.Exp((-0.5 * z * z) - LogSqrtTwoPi) / fraction;
    }
}
