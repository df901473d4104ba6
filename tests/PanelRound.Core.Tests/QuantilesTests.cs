using MathNet.Numerics.Statistics;
using PanelRound.Core.Statistics;
using MathNetStatistics = MathNet.Numerics.Statistics.Statistics;

namespace PanelRound.Core.Tests;

public class QuantilesTests
{
    // Hyndman & Fan (1996), "Sample quantiles in statistical packages", types 6 / 7 / 8; the
    // values are the reference checks of the statistics-core issue (15, 20, 35, 40, 50 at p = 0.4
    // is also the worked example of the "Percentile" article's interpolation methods).
    [Theory]
    [InlineData(QuantileMethod.HyndmanFan6, 26.0)]
    [InlineData(QuantileMethod.HyndmanFan7, 29.0)]
    [InlineData(QuantileMethod.HyndmanFan8, 27.0)]
    public void Quantile_FiveValuesAtP04_MatchesHyndmanFan(QuantileMethod method, double expected)
    {
        double[] values = [40, 15, 50, 35, 20];
        Assert.Equal(expected, Quantiles.Quantile(values, 0.4, method), 12);
    }

    // Hyndman & Fan (1996) types 6 / 7 / 8 on 1..10 at p = 0.25: 2.75 / 3.25 / 2.916667.
    [Theory]
    [InlineData(QuantileMethod.HyndmanFan6, 2.75)]
    [InlineData(QuantileMethod.HyndmanFan7, 3.25)]
    [InlineData(QuantileMethod.HyndmanFan8, 2.916667)]
    public void Quantile_OneToTenAtP025_MatchesHyndmanFan(QuantileMethod method, double expected)
    {
        var values = Enumerable.Range(1, 10).Select(i => (double)i).Reverse().ToArray();
        Assert.Equal(expected, Quantiles.Quantile(values, 0.25, method), 6);
    }

    public static TheoryData<QuantileMethod, QuantileDefinition> MathNetDefinitions => new()
    {
        { QuantileMethod.HyndmanFan6, QuantileDefinition.R6 },
        { QuantileMethod.HyndmanFan7, QuantileDefinition.R7 },
        { QuantileMethod.HyndmanFan8, QuantileDefinition.R8 },
    };

    // Reference library: MathNet.Numerics 5.0.0 Statistics.QuantileCustom with R6 / R7 / R8, on
    // generated samples of sizes 1..60 and larger, drawn from few distinct values so that ties are frequent.
    [Theory]
    [MemberData(nameof(MathNetDefinitions))]
    public void Quantile_GeneratedSamplesWithTies_MatchesMathNetQuantileCustom(QuantileMethod method, QuantileDefinition definition)
    {
        var random = new Random(20240611);
        int[] sizes = [.. Enumerable.Range(1, 60), 97, 128, 255, 1000];
        var checks = 0;
        foreach (var n in sizes)
        {
            foreach (var tiesHeavy in new[] { true, false })
            {
                var values = new double[n];
                for (var i = 0; i < n; i++)
                {
                    values[i] = tiesHeavy ? random.Next(0, 6) * 2.5 : (random.NextDouble() * 2000) - 500;
                }

                for (var step = 0; step <= 40; step++)
                {
                    var p = step / 40.0;
                    var expected = MathNetStatistics.QuantileCustom(values, p, definition);
                    var actual = Quantiles.Quantile(values, p, method);
                    Assert.True(
                        Math.Abs(expected - actual) <= 1e-9 * (1 + Math.Abs(expected)),
                        $"n={n}, p={p}, {method}: MathNet {expected}, ours {actual}");
                    checks++;
                }
            }
        }

        Assert.Equal(64 * 2 * 41, checks);
    }

    [Theory]
    [MemberData(nameof(MathNetDefinitions))]
    public void QuantileSorted_GeneratedSortedSamples_MatchesMathNetQuantileCustom(QuantileMethod method, QuantileDefinition definition)
    {
        var random = new Random(7);
        for (var n = 1; n <= 40; n++)
        {
            var values = Enumerable.Range(0, n).Select(_ => (double)random.Next(-3, 4)).Order().ToArray();
            foreach (var p in new[] { 0.0, 0.1, 0.25, 0.5, 0.75, 0.9, 1.0 })
            {
                Assert.Equal(MathNetStatistics.QuantileCustom(values, p, definition), Quantiles.QuantileSorted(values, p, method), 9);
            }
        }
    }

    // Median and IQR against MathNet (Statistics.Median; R7 quartiles for the IQR).
    [Fact]
    public void MedianAndInterquartileRange_GeneratedSamples_MatchMathNet()
    {
        var random = new Random(11);
        for (var n = 1; n <= 50; n++)
        {
            var values = Enumerable.Range(0, n).Select(_ => Math.Round(random.NextDouble() * 100, 1)).ToArray();
            Assert.Equal(MathNetStatistics.Median(values), Quantiles.Median(values), 9);
            var iqr = MathNetStatistics.QuantileCustom(values, 0.75, QuantileDefinition.R7)
                - MathNetStatistics.QuantileCustom(values, 0.25, QuantileDefinition.R7);
            Assert.Equal(iqr, Quantiles.InterquartileRange(values), 9);
        }
    }

    [Theory]
    [InlineData(QuantileMethod.HyndmanFan6)]
    [InlineData(QuantileMethod.HyndmanFan7)]
    [InlineData(QuantileMethod.HyndmanFan8)]
    public void Quantile_ExtremeProbabilities_ReturnMinimumAndMaximum(QuantileMethod method)
    {
        double[] values = [3, -1, 7, 7, 2];
        Assert.Equal(-1, Quantiles.Quantile(values, 0, method));
        Assert.Equal(7, Quantiles.Quantile(values, 1, method));
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(0.3)]
    [InlineData(1.0)]
    public void Quantile_SingleValue_ReturnsThatValue(double p)
        => Assert.Equal(42.5, Quantiles.Quantile([42.5], p));

    [Theory]
    [InlineData(-0.01)]
    [InlineData(1.01)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void Quantile_ProbabilityOutsideUnitInterval_Throws(double p)
        => Assert.ThrowsAny<ArgumentException>(() => Quantiles.Quantile([1, 2, 3], p));

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void Quantile_NonFiniteValue_Throws(double bad)
        => Assert.ThrowsAny<ArgumentException>(() => Quantiles.Quantile([1, bad, 3], 0.5));

    [Fact]
    public void Quantile_Empty_Throws()
        => Assert.ThrowsAny<ArgumentException>(() => Quantiles.Quantile([], 0.5));

    [Fact]
    public void QuantileSorted_UnsortedInput_Throws()
        => Assert.Throws<ArgumentException>(() => Quantiles.QuantileSorted([1.0, 3.0, 2.0], 0.5));

    [Fact]
    public void Quantile_Input_IsNotModified()
    {
        double[] values = [5, 1, 4];
        Quantiles.Quantile(values, 0.5);
        Assert.Equal([5.0, 1.0, 4.0], values);
    }

    // SciPy scipy.stats.trim_mean documentation examples: trim_mean(arange(20), 0.1) = 9.5;
    // the [1, 2, 3, 5] at 0.25 case cuts one value per tail, leaving (2 + 3) / 2.
    [Theory]
    [InlineData(new double[] { 1, 2, 3, 5 }, 0.25, 2.5)]
    [InlineData(new double[] { 0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19 }, 0.1, 9.5)]
    public void TrimmedMean_SciPyExamples_MatchDocumentedValues(double[] values, double alpha, double expected)
        => Assert.Equal(expected, Quantiles.TrimmedMean(values, alpha), 12);

    // floor(alpha * n) per tail, worked by hand: n = 9, alpha = 0.2 cuts floor(1.8) = 1 per tail.
    [Theory]
    [InlineData(0.0, 15.0)]
    [InlineData(0.2, 5.0)]
    [InlineData(0.49, 5.0)]
    public void TrimmedMean_FloorOfAlphaTimesN_CutsThatManyPerTail(double alpha, double expected)
    {
        // 1..8 and 99: sum 36 + 99 = 135, mean 15. Cut 1 per tail: 2..8 → 35/7 = 5.
        // alpha 0.49: floor(4.41) = 4 per tail leaves only the middle value 5.
        double[] values = [99, 1, 2, 3, 4, 5, 6, 7, 8];
        Assert.Equal(expected, Quantiles.TrimmedMean(values, alpha), 12);
    }

    [Fact]
    public void TrimmedMean_DecimalProductNotExactInBinary_CutsTheDecimalCount()
    {
        // 0.29 * 100 is 28.999999999999996 in binary; the documented rule cuts 29 per tail.
        var values = Enumerable.Range(0, 100).Select(i => (double)(i * i)).ToArray();
        var kept = values.Skip(29).Take(42);
        Assert.Equal(kept.Average(), Quantiles.TrimmedMean(values, 0.29), 9);
    }

    [Theory]
    [InlineData(0.5)]
    [InlineData(-0.1)]
    [InlineData(double.NaN)]
    public void TrimmedMean_AlphaOutOfRange_Throws(double alpha)
        => Assert.ThrowsAny<ArgumentException>(() => Quantiles.TrimmedMean([1, 2, 3], alpha));
}
