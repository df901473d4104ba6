using BenchmarkDotNet.Attributes;
using PanelRound.Core.Forecasting;

namespace PanelRound.Bench;

/// <summary>Benchmark forecasts of a panel: 20 questions, each with 40 reference observations, every method fitted with a 5-year horizon.</summary>
[MemoryDiagnoser]
public class Fit20QuestionsBy40Observations
{
    private double[][] _series = [];

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(15);
        _series = Enumerable.Range(0, 20).Select(q =>
        {
            var level = 1000.0 * (q + 1);
            return Enumerable.Range(0, 40).Select(t => level * (1 + (0.02 * t)) + (level * 0.03 * (random.NextDouble() - 0.5))).ToArray();
        }).ToArray();
    }

    [Benchmark]
    public int FitAll()
    {
        var count = 0;
        foreach (var y in _series)
        {
            count += Benchmarks.FitAll(y, 5).Count;
        }

        return count;
    }
}
