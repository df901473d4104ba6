using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

public class ConvergenceTests
{
    [Theory]
    [InlineData(0.08, 5, true)]
    [InlineData(0.10, 5, true)]   // at the threshold counts
    [InlineData(0.1001, 12, false)]
    [InlineData(0.05, 4, false)]  // too few answers
    public void Assess_RelativeIqrAndN_DecideConsensus(double relativeIqr, int n, bool reached)
        => Assert.Equal(reached, Convergence.Assess(relativeIqr, 0.2, n).ConsensusReached);

    [Fact]
    public void Assess_BothRounds_ChangeIsCurrentMinusPrevious()
    {
        var c = Convergence.Assess(0.12, 0.30, 9);
        Assert.Equal(-0.18, c.Change!.Value, 12);
        Assert.Equal(0.12, c.RelativeIqr);
        Assert.Equal(0.30, c.PreviousRelativeIqr);
    }

    [Theory]
    [InlineData(null, 0.3)]
    [InlineData(0.3, null)]
    [InlineData(null, null)]
    public void Assess_MissingRelativeIqr_ChangeIsNull(double? current, double? previous)
        => Assert.Null(Convergence.Assess(current, previous, 10).Change);

    [Fact]
    public void Assess_UndefinedRelativeIqr_NeverReachesConsensus()
        => Assert.False(Convergence.Assess(null, 0.05, 50, threshold: 1).ConsensusReached);

    [Fact]
    public void Assess_CustomThresholdAndMinimum_AreApplied()
    {
        Assert.True(Convergence.Assess(0.2, null, 3, threshold: 0.25, minimumN: 3).ConsensusReached);
        Assert.False(Convergence.Assess(0.2, null, 3, threshold: 0.15, minimumN: 3).ConsensusReached);
    }

    [Theory]
    [InlineData(-0.1)]
    [InlineData(double.NaN)]
    public void Assess_InvalidRelativeIqr_Throws(double bad)
        => Assert.ThrowsAny<ArgumentException>(() => Convergence.Assess(bad, null, 5));
}

public class StabilityTests
{
    [Theory]
    [InlineData(100.0, 115.0, false)] // exactly 15%: not more than
    [InlineData(100.0, 115.5, true)]
    [InlineData(100.0, 84.0, true)]
    [InlineData(-100.0, -90.0, false)] // relative to |previous|
    [InlineData(0.0, 0.0, false)]
    [InlineData(0.0, 0.001, true)]     // from 0, any change is a move (documented)
    public void HasMoved_RelativeChange_ComparedWithThreshold(double previous, double current, bool moved)
        => Assert.Equal(moved, Stability.HasMoved(previous, current, 0.15));

    [Fact]
    public void Assess_FewSmallMoves_IsStable()
    {
        // 10 experts; one moves 20%, the others by at most 2% in both directions.
        PairedAnswer[] pairs =
        [
            new(100, 120), new(100, 101), new(100, 99), new(200, 202), new(200, 198),
            new(50, 50), new(80, 81), new(80, 79), new(300, 303), new(300, 297),
        ];
        var s = Stability.Assess(pairs);
        Assert.Equal(10, s.PairedCount);
        Assert.Equal(1, s.MovedCount);
        Assert.Equal(0.1, s.ShareMoved, 12);
        Assert.NotNull(s.Wilcoxon);
        Assert.Equal(9, s.Wilcoxon.N); // one zero difference dropped
        Assert.True(s.Wilcoxon.PValue >= 0.05);
        Assert.True(s.IsStable);
    }

    [Fact]
    public void Assess_ManyMovers_IsNotStable()
    {
        PairedAnswer[] pairs = [new(100, 130), new(100, 70), new(100, 100), new(100, 101)];
        var s = Stability.Assess(pairs);
        Assert.Equal(0.5, s.ShareMoved);
        Assert.False(s.IsStable);
    }

    [Fact]
    public void Assess_SmallButSystematicShift_IsNotStable()
    {
        // Every one of 12 experts raises by 1-12%: nobody moves 15%, but the signed-rank test
        // finds a shift (all differences positive: exact two-sided p = 2/4096).
        var pairs = Enumerable.Range(1, 12).Select(i => new PairedAnswer(100, 100 + i)).ToArray();
        var s = Stability.Assess(pairs);
        Assert.Equal(0, s.MovedCount);
        Assert.Equal(2.0 / 4096, s.Wilcoxon!.PValue, 12);
        Assert.False(s.IsStable);
    }

    [Fact]
    public void Assess_NoPairs_IsNotStableAndHasNoTest()
    {
        var s = Stability.Assess([]);
        Assert.Equal(0, s.PairedCount);
        Assert.Null(s.Wilcoxon);
        Assert.False(s.IsStable);
    }

    [Fact]
    public void Assess_NonFiniteAnswer_Throws()
        => Assert.ThrowsAny<ArgumentException>(() => Stability.Assess([new PairedAnswer(1, double.NaN)]));
}

public class StopAdviceTests
{
    private static StabilityAssessment StableAssessment() =>
        Stability.Assess(Enumerable.Range(0, 6).Select(i => new PairedAnswer(100, i % 2 == 0 ? 101 : 99)).ToArray());

    [Fact]
    public void Suggest_ConsensusReached_ComesFirst()
    {
        var s = StopAdvice.Suggest(Convergence.Assess(0.05, 0.2, 8), StableAssessment(), 3);
        Assert.Equal(StopReason.ConsensusReached, s.Reason);
        Assert.True(s.ShouldStop);
        Assert.Contains("5.0%", s.Explanation, StringComparison.Ordinal);
    }

    [Fact]
    public void Suggest_StableWithoutConsensus_SaysStable()
    {
        Assert.True(StableAssessment().IsStable);
        var s = StopAdvice.Suggest(Convergence.Assess(0.4, 0.41, 8), StableAssessment(), 2);
        Assert.Equal(StopReason.Stable, s.Reason);
    }

    [Theory]
    [InlineData(1, 3, StopReason.KeepGoing)]
    [InlineData(2, 3, StopReason.KeepGoing)]
    [InlineData(3, 3, StopReason.RoundCapReached)]
    [InlineData(4, 3, StopReason.RoundCapReached)]
    [InlineData(2, 2, StopReason.RoundCapReached)]
    public void Suggest_NeitherConsensusNorStability_DependsOnRoundCap(int round, int cap, StopReason expected)
    {
        var s = StopAdvice.Suggest(Convergence.Assess(0.4, null, 8), null, round, cap);
        Assert.Equal(expected, s.Reason);
        Assert.Equal(expected != StopReason.KeepGoing, s.ShouldStop);
        Assert.False(string.IsNullOrWhiteSpace(s.Explanation));
    }

    [Fact]
    public void Suggest_LowDispersionButTooFewAnswers_ExplainsTheCount()
    {
        var s = StopAdvice.Suggest(Convergence.Assess(0.05, null, 3), null, 1);
        Assert.Equal(StopReason.KeepGoing, s.Reason);
        Assert.Contains("only 3 answers", s.Explanation, StringComparison.Ordinal);
    }

    [Fact]
    public void Suggest_RoundZero_Throws()
        => Assert.Throws<ArgumentOutOfRangeException>(() => StopAdvice.Suggest(Convergence.Assess(0.4, null, 8), null, 0));
}
