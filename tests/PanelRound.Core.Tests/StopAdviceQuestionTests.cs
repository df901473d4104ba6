using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

/// <summary>
/// A question's stop suggestion from its periods' suggestions (no published source: the rule is
/// the product's own, documented on <see cref="StopAdvice.ForQuestion"/>; the period criteria
/// themselves are checked in the convergence and stability tests).
/// </summary>
public class StopAdviceQuestionTests
{
    private static PeriodStop P(string period, StopReason? reason) =>
        new(period, reason is { } r ? new StopSuggestion(r, r != StopReason.KeepGoing, r.ToString()) : null);

    [Fact]
    public void ForQuestion_NoSuggestionYet_KeepGoing()
    {
        var q = StopAdvice.ForQuestion([P("2027", null), P("2028", null)]);
        Assert.Equal(StopReason.KeepGoing, q.Reason);
        Assert.Equal("No round has answers yet.", q.Explanation);
    }

    [Fact]
    public void ForQuestion_NoPeriods_KeepGoing() => Assert.Equal(StopReason.KeepGoing, StopAdvice.ForQuestion([]).Reason);

    [Fact]
    public void ForQuestion_ConsensusEverywhere_Consensus() =>
        Assert.Equal(StopReason.ConsensusReached, StopAdvice.ForQuestion([P("2027", StopReason.ConsensusReached), P("2028", StopReason.ConsensusReached)]).Reason);

    [Fact]
    public void ForQuestion_ConsensusOrStableEverywhere_Stable() =>
        Assert.Equal(StopReason.Stable, StopAdvice.ForQuestion([P("2027", StopReason.ConsensusReached), P("2028", StopReason.Stable)]).Reason);

    [Fact]
    public void ForQuestion_CapReachedInOnePeriod_CapEndsTheQuestion() =>
        Assert.Equal(StopReason.RoundCapReached, StopAdvice.ForQuestion([P("2027", StopReason.KeepGoing), P("2028", StopReason.RoundCapReached)]).Reason);

    [Fact]
    public void ForQuestion_SomePeriodsKeepGoing_NamesThem()
    {
        var q = StopAdvice.ForQuestion([P("2027", StopReason.KeepGoing), P("2028", StopReason.ConsensusReached), P("2029", StopReason.KeepGoing)]);
        Assert.Equal(StopReason.KeepGoing, q.Reason);
        Assert.Equal("Another round may help for 2027, 2029.", q.Explanation);
    }

    [Fact]
    public void ForQuestion_PeriodsWithoutSuggestion_DoNotDecide() =>
        Assert.Equal(StopReason.ConsensusReached, StopAdvice.ForQuestion([P("2027", null), P("2028", StopReason.ConsensusReached)]).Reason);
}
