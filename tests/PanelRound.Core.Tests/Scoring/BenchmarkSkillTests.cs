using PanelRound.Core.Scoring;
using static PanelRound.Core.Tests.Scoring.TestItems;

namespace PanelRound.Core.Tests.Scoring;

public class BenchmarkSkillTests
{
    [Fact]
    public void Compare_PicksTheLowestScaledMae_AndSkillIsOneMinusTheRatio()
    {
        // Two question-periods with scales 10 and 20. Consensus errors 5 and 10 → MASE (0.5 + 0.5) / 2 = 0.5.
        // naive errors 10 and 20 → 1.0; damped errors 8 and 8 → (0.8 + 0.4) / 2 = 0.6 (the best); skill = 1 − 0.5 / 0.6.
        var consensus = new[]
        {
            Point(105, 100, scale: 10, expert: "consensus", period: "2025"),
            Point(210, 200, scale: 20, expert: "consensus", period: "2026"),
        };
        var benchmarks = new[]
        {
            Point(110, 100, scale: 10, expert: "benchmark:naive", period: "2025"),
            Point(180, 200, scale: 20, expert: "benchmark:naive", period: "2026"),
            Point(92, 100, scale: 10, expert: "benchmark:damped", period: "2025"),
            Point(208, 200, scale: 20, expert: "benchmark:damped", period: "2026"),
            Point(100, 100, scale: 10, expert: "benchmark:holt", period: "2025"),
        };
        var result = BenchmarkSkill.Compare(consensus, benchmarks);
        Assert.Equal(2, result.N);
        Assert.Equal(0.5, result.ConsensusScaledMae!.Value, 12);
        Assert.Equal("benchmark:damped", result.Best);
        Assert.Equal(0.6, result.BestScaledMae!.Value, 12);
        Assert.Equal(1 - (0.5 / 0.6), result.SkillVsBest!.Value, 12);
        // Holt is perfect on 2025 but has no forecast for 2026: it is scored, but not compared.
        var holt = result.Benchmarks.Single(b => b.Key == "benchmark:holt");
        Assert.Null(holt.ComparedScaledMae);
        Assert.Equal(0, holt.Summary.Mae);
        Assert.Equal(15, result.Benchmarks.Single(b => b.Key == "benchmark:naive").Summary.Mae);
    }

    [Fact]
    public void Compare_NoScaledConsensus_HasNoBestAndNoSkill()
    {
        var result = BenchmarkSkill.Compare([Point(105, 100, expert: "consensus")], [Point(100, 100, expert: "benchmark:naive")]);
        Assert.Equal(0, result.N);
        Assert.Null(result.Best);
        Assert.Null(result.SkillVsBest);
    }

    [Fact]
    public void Compare_DuplicateBenchmarkItem_Throws()
    {
        Assert.Throws<ArgumentException>(() => BenchmarkSkill.Compare([], [Point(1, 1, expert: "benchmark:naive"), Point(2, 1, expert: "benchmark:naive")]));
    }
}
