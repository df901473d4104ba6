using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

public class ScorecardTests
{
    private static ScoredItem[] Expert(string key, int count, double error, double scale = 1, string panel = "P1") =>
        [.. Enumerable.Range(0, count).Select(i => TestItems.Point(
            100 + error, 100, scale, expert: key, panel: panel, period: (2025 + i).ToString(System.Globalization.CultureInfo.InvariantCulture)))];

    [Theory]
    // Scaled mean error m with threshold 0.1: m ≥ 0.1 over, m ≤ −0.1 under, else neutral.
    [InlineData(0.5, BiasDirection.OverForecasts)]
    [InlineData(0.1, BiasDirection.OverForecasts)]
    [InlineData(0.05, BiasDirection.Neutral)]
    [InlineData(0, BiasDirection.Neutral)]
    [InlineData(-0.05, BiasDirection.Neutral)]
    [InlineData(-0.5, BiasDirection.UnderForecasts)]
    public void ForExperts_ScaledMeanError_GivesBiasDirection(double scaledError, BiasDirection expected)
    {
        // Every item errs by m·scale, so the scaled mean error is m.
        var score = Assert.Single(Scorecard.ForExperts(Expert("A", 4, scaledError * 20, scale: 20), ScorecardOptions.Default));
        Assert.Equal(scaledError, score.Final.ScaledMeanError!.Value, 12);
        Assert.Equal(expected, score.Bias);
    }

    [Fact]
    public void ForExperts_OffsettingErrors_AreNeutralThoughMaeIsLarge()
    {
        ScoredItem[] items = [TestItems.Point(110, 100, 5), TestItems.Point(90, 100, 5, period: "2026")];
        var score = Assert.Single(Scorecard.ForExperts(items, ScorecardOptions.Default));
        Assert.Equal(BiasDirection.Neutral, score.Bias);
        Assert.Equal(2, score.Final.ScaledMae!.Value, 12);
    }

    [Fact]
    public void ForExperts_NoScale_BiasUnknown()
    {
        var score = Assert.Single(Scorecard.ForExperts(Expert("A", 4, 10, scale: double.NaN), ScorecardOptions.Default));
        Assert.Null(score.Bias);
        Assert.Equal(10, score.Final.MeanError!.Value, 12);
    }

    [Fact]
    public void ForExperts_FirstToFinal_ComparesSameQuestionPeriods()
    {
        ScoredItem[] items =
        [
            // Panel P1 has two rounds: round-1 errors 4 and 6, final errors 2 and 2; scale 2.
            TestItems.Point(104, 100, 2, period: "2025", round: 1, isFinal: false),
            TestItems.Point(106, 100, 2, period: "2026", round: 1, isFinal: false),
            TestItems.Point(102, 100, 2, period: "2025", round: 2, isFinal: true),
            TestItems.Point(98, 100, 2, period: "2026", round: 2, isFinal: true),

            // A final item with no round-1 counterpart: scored, not paired.
            TestItems.Point(130, 100, 2, period: "2027", round: 2, isFinal: true),

            // A round-1 item whose question-period had no final answer from this expert: not paired.
            TestItems.Point(150, 100, 2, period: "2028", round: 1, isFinal: false),

            // A single-round panel: its round 1 is final, scored but not paired.
            TestItems.Point(120, 100, 2, panel: "P2", round: 1, isFinal: true),
        ];
        var score = Assert.Single(Scorecard.ForExperts(items, ScorecardOptions.Default));
        Assert.Equal(4, score.Final.N);
        Assert.Equal(2, score.FirstRound.N);
        Assert.Equal(2, score.FinalPaired.N);

        // Round 1: (4 + 6) / 2 / 2 = 2.5; final: (2 + 2) / 2 / 2 = 1; change −1.5 (the rounds helped).
        Assert.Equal(2.5, score.FirstRound.ScaledMae!.Value, 12);
        Assert.Equal(1, score.FinalPaired.ScaledMae!.Value, 12);
        Assert.Equal(-1.5, score.FirstToFinalChange!.Value, 12);
    }

    [Fact]
    public void ForExperts_NoLaterRound_FirstToFinalIsNull()
    {
        var score = Assert.Single(Scorecard.ForExperts(Expert("A", 3, 1), ScorecardOptions.Default));
        Assert.Equal(0, score.FirstRound.N);
        Assert.Null(score.FirstToFinalChange);
    }

    [Fact]
    public void ForExperts_FewerThanThreeScored_NobodyRanked()
    {
        ScoredItem[] items = [.. Expert("A", 2, 1), .. Expert("B", 2, 5), .. Expert("C", 1, 0.1)];
        var scores = Scorecard.ForExperts(items, ScorecardOptions.Default);
        Assert.Equal(3, scores.Count);
        Assert.All(scores, s => Assert.False(s.Ranked));
        Assert.All(scores, s => Assert.Null(s.Rank));
        Assert.Equal(["A", "B", "C"], scores.Select(s => s.ExpertKey));
    }

    [Fact]
    public void ForExperts_RanksByScaledMaeAmongThoseWithEnoughItems()
    {
        ScoredItem[] items =
        [
            .. Expert("A", 3, 2), .. Expert("B", 5, 1), .. Expert("C", 4, 2), .. Expert("D", 2, 0.1), .. Expert("E", 3, 4),
        ];
        var scores = Scorecard.ForExperts(items, ScorecardOptions.Default);
        Assert.Equal(["B", "A", "C", "E", "D"], scores.Select(s => s.ExpertKey));

        // A and C tie at 2: they share rank 2 and the next rank is 4.
        Assert.Equal(new int?[] { 1, 2, 2, 4, null }, scores.Select(s => s.Rank));
        Assert.False(scores.Single(s => s.ExpertKey == "D").Ranked);
    }

    [Fact]
    public void ForExperts_ItemsWithoutScale_DoNotCountForRanking()
    {
        ScoredItem[] items = [.. Expert("A", 2, 1), .. Expert("A", 5, 1, scale: double.NaN, panel: "P2")];
        var score = Assert.Single(Scorecard.ForExperts(items, ScorecardOptions.Default));
        Assert.Equal(7, score.Final.N);
        Assert.Equal(2, score.Final.NScaled);
        Assert.False(score.Ranked);
    }

    [Fact]
    public void ForExperts_DuplicateAnswerInARound_Throws()
    {
        ScoredItem[] items = [TestItems.Point(1, 2), TestItems.Point(3, 2)];
        Assert.Throws<ArgumentException>(() => Scorecard.ForExperts(items, ScorecardOptions.Default));
    }

    [Fact]
    public void ForConsensus_ScoresFinalRoundItemsLikeAnExpert()
    {
        ScoredItem[] items =
        [
            TestItems.Point(120, 112, 3, expert: "consensus", period: "2025", round: 2),
            TestItems.Point(115, 118, 3, expert: "consensus", period: "2026", round: 2),
            TestItems.Point(999, 118, 3, expert: "consensus", period: "2026", round: 1, isFinal: false),
        ];
        var s = Scorecard.ForConsensus(items);
        Assert.Equal(2, s.N);
        Assert.Equal(5.5, s.Mae!.Value, 12);
        Assert.Equal(5.5 / 3, s.ScaledMae!.Value, 12);
    }

    [Fact]
    public void ForNaiveBaseline_OneItemPerQuestionPeriod()
    {
        // Two experts on the same two question-periods; naive forecast 110; outcomes 112 and 118.
        ScoredItem[] items =
        [
            TestItems.Point(120, 112, 3, 110, expert: "A", period: "2025"),
            TestItems.Point(115, 118, 3, 110, expert: "A", period: "2026"),
            TestItems.Point(100, 112, 3, 110, expert: "B", period: "2025"),
            TestItems.Point(101, 118, 3, 110, expert: "B", period: "2026"),
        ];
        var s = Scorecard.ForNaiveBaseline(items);
        Assert.Equal(2, s.N);
        Assert.Equal(5, s.Mae!.Value, 12);
        Assert.Equal(-5, s.MeanError!.Value, 12);
        Assert.Equal(0, s.Skill!.Value, 12);
    }
}
