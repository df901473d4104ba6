using BenchmarkDotNet.Attributes;
using PanelRound.Core.Statistics;

namespace PanelRound.Bench;

/// <summary>Answers shaped like prices per square metre: a normal core and a few far answers.</summary>
internal static class Answers
{
    public static double[] Generate(int n, int seed)
    {
        var random = new Random(seed);
        var values = new double[n];
        for (var i = 0; i < n; i++)
        {
            // Box-Muller normal around 5,000 with sd 400, rounded to whole currency units (ties).
            var z = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            values[i] = Math.Round(5000 + (400 * z));
            if (random.Next(50) == 0)
            {
                values[i] *= 3;
            }
        }

        return values;
    }
}

/// <summary>One round of 1,000 experts × 50 question-periods; baseline: copy and sort the same doubles.</summary>
[MemoryDiagnoser]
public class RoundOf1000ExpertsBy50Periods
{
    private static readonly FeedbackSettings ModifiedZ = new() { Rule = OutlierRule.ModifiedZScore };
    private double[][] periods = [];

    [GlobalSetup]
    public void Setup() => periods = Enumerable.Range(0, 50).Select(i => Answers.Generate(1000, 100 + i)).ToArray();

    [Benchmark(Baseline = true)]
    public double ArraySort()
    {
        var sum = 0.0;
        foreach (var answers in periods)
        {
            var copy = (double[])answers.Clone();
            Array.Sort(copy);
            sum += copy[copy.Length / 2];
        }

        return sum;
    }

    [Benchmark]
    public double FeedbackTukey()
    {
        var sum = 0.0;
        foreach (var answers in periods)
        {
            sum += RoundFeedback.ForPoint(answers, FeedbackSettings.Default).Feedback!.TrimmedMedian;
        }

        return sum;
    }

    [Benchmark]
    public double FeedbackModifiedZ()
    {
        var sum = 0.0;
        foreach (var answers in periods)
        {
            sum += RoundFeedback.ForPoint(answers, ModifiedZ).Feedback!.TrimmedMedian;
        }

        return sum;
    }
}

/// <summary>100,000 answers in one question-period; baseline: copy and sort the same doubles.</summary>
[MemoryDiagnoser]
public class OnePeriodOf100000Answers
{
    private static readonly FeedbackSettings ModifiedZ = new() { Rule = OutlierRule.ModifiedZScore };
    private double[] answers = [];

    [GlobalSetup]
    public void Setup() => answers = Answers.Generate(100_000, 7);

    [Benchmark(Baseline = true)]
    public double ArraySort()
    {
        var copy = (double[])answers.Clone();
        Array.Sort(copy);
        return copy[copy.Length / 2];
    }

    [Benchmark]
    public double FeedbackTukey() => RoundFeedback.ForPoint(answers, FeedbackSettings.Default).Feedback!.TrimmedMedian;

    [Benchmark]
    public double FeedbackModifiedZ() => RoundFeedback.ForPoint(answers, ModifiedZ).Feedback!.TrimmedMedian;
}
