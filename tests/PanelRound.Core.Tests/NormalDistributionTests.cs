using PanelRound.Core.Statistics;
using MathNetNormal = MathNet.Numerics.Distributions.Normal;

namespace PanelRound.Core.Tests;

public class NormalDistributionTests
{
    // Reference library: MathNet.Numerics Normal.CDF.
    [Fact]
    public void Cdf_Grid_MatchesMathNetToAbsolute1e14()
    {
        for (var z = -9.0; z <= 9.0; z += 0.01)
        {
            Assert.Equal(MathNetNormal.CDF(0, 1, z), NormalDistribution.Cdf(z), 1e-14);
        }
    }

    [Fact]
    public void UpperTailProbability_FarTail_MatchesMathNetToRelative1e10()
    {
        for (var z = 0.5; z <= 30; z += 0.25)
        {
            var expected = MathNetNormal.CDF(0, 1, -z);
            var actual = NormalDistribution.UpperTailProbability(z);
            Assert.True(Math.Abs(actual - expected) <= 1e-10 * expected, $"z={z}: MathNet {expected}, ours {actual}");
        }
    }

    // Handbook values (Abramowitz & Stegun, Table 26.1): Φ(1.96) = 0.9750021, Φ(1) = 0.8413447.
    [Theory]
    [InlineData(1.96, 0.9750021)]
    [InlineData(1.0, 0.8413447)]
    [InlineData(0.0, 0.5)]
    [InlineData(-1.0, 0.1586553)]
    public void Cdf_HandbookValues_Match(double z, double expected)
        => Assert.Equal(expected, NormalDistribution.Cdf(z), 7);
}
