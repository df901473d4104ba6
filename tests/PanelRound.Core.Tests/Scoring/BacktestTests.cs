using PanelRound.Core.Scoring;
using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests.Scoring;

public class BacktestTests
{
    // Three panels in sequence, one question-period each, experts "good", "mid" and "bad"; scale 10.
    // P1 closes 2020-01-01, its outcome is known 2021-01-15.
    // P2 closes 2021-06-01 (after P1's outcome), its outcome is known 2023-01-15.
    // P3 closes 2023-06-01 (after P2's outcome), its outcome is known 2025-01-15, after every close.
    private static readonly DateOnly P1Closed = new(2020, 1, 1);
    private static readonly DateOnly P2Closed = new(2021, 6, 1);
    private static readonly DateOnly P3Closed = new(2023, 6, 1);

    private static ScoredItem[] History(double p2Outcome = 200, double p3Outcome = 300)
    {
        ScoredItem Item(string expert, string panel, string period, double value, double outcome, DateOnly closed, DateOnly known) =>
            TestItems.Point(value, outcome, 10, expert: expert, panel: panel, period: period, closedOn: closed, knownOn: known);

        return
        [
            Item("good", "P1", "2020", 101, 100, P1Closed, new(2021, 1, 15)),
            Item("mid", "P1", "2020", 110, 100, P1Closed, new(2021, 1, 15)),
            Item("bad", "P1", "2020", 130, 100, P1Closed, new(2021, 1, 15)),
            Item("good", "P2", "2022", 199, p2Outcome, P2Closed, new(2023, 1, 15)),
            Item("mid", "P2", "2022", 215, p2Outcome, P2Closed, new(2023, 1, 15)),
            Item("bad", "P2", "2022", 230, p2Outcome, P2Closed, new(2023, 1, 15)),
            Item("good", "P3", "2024", 330, p3Outcome, P3Closed, new(2025, 1, 15)),
            Item("mid", "P3", "2024", 310, p3Outcome, P3Closed, new(2025, 1, 15)),
            Item("bad", "P3", "2024", 301, p3Outcome, P3Closed, new(2025, 1, 15)),
        ];
    }

    /// <summary>The same backtest with every item allowed into every panel's weights: it leaks outcomes.</summary>
    private static BacktestResult Leaky(ScoredItem[] items) =>
        Backtest.Run(BacktestPanel.FromItems(items), items, BacktestOptions.Default, static (_, _) => true);

    private static BacktestPanelResult Panel(BacktestResult result, string key) => result.Panels.Single(p => p.PanelKey == key);

    [Fact]
    public void Run_LaterOutcomeChanges_EarlierPanelsAreUntouched()
    {
        var baseline = Backtest.Run(History(), BacktestOptions.Default);

        // P3's outcome is known only after every panel closed: no panel's weights may move.
        var p3Changed = Backtest.Run(History(p3Outcome: 340), BacktestOptions.Default);
        foreach (var key in new[] { "P1", "P2", "P3" })
        {
            Assert.True(Panel(baseline, key).PointWeights!.SameAs(Panel(p3Changed, key).PointWeights!), key);
        }

        // And nothing of P1 and P2 moves: their consensus values and errors are identical.
        Assert.Equal(Panel(baseline, "P1").Targets, Panel(p3Changed, "P1").Targets);
        Assert.Equal(Panel(baseline, "P2").Targets, Panel(p3Changed, "P2").Targets);
        Assert.Equal(Panel(baseline, "P2").Comparison, Panel(p3Changed, "P2").Comparison);

        // P2's outcome is known after P2 closed and before P3 closed: P1's and P2's weights stay, P3's move.
        var p2Changed = Backtest.Run(History(p2Outcome: 260), BacktestOptions.Default);
        Assert.True(Panel(baseline, "P1").PointWeights!.SameAs(Panel(p2Changed, "P1").PointWeights!));
        Assert.True(Panel(baseline, "P2").PointWeights!.SameAs(Panel(p2Changed, "P2").PointWeights!));
        Assert.Equal(Panel(baseline, "P2").Targets[0].Weighted, Panel(p2Changed, "P2").Targets[0].Weighted);
        Assert.False(Panel(baseline, "P3").PointWeights!.SameAs(Panel(p2Changed, "P3").PointWeights!));
    }

    [Fact]
    public void Run_PanelClosingTheSameDay_DoesNotInformWeightsEvenWithAnEarlyOutcome()
    {
        // Panel Q closes the same day as P2 and asked about a period whose outcome was already
        // recorded: its items are not "known before" P2 closed, so P2's weights must not see them.
        var extra = TestItems.Point(500, 100, 10, expert: "good", panel: "Q", period: "2019", closedOn: P2Closed, knownOn: new(2021, 1, 15));
        var without = Backtest.Run(BacktestPanel.FromItems(History()), History(), BacktestOptions.Default);
        var with = Backtest.Run(BacktestPanel.FromItems(History()), [.. History(), extra], BacktestOptions.Default);
        Assert.True(Panel(without, "P2").PointWeights!.SameAs(Panel(with, "P2").PointWeights!));

        // It does inform P3, which closed later: the check is sensitive to the item.
        Assert.False(Panel(without, "P3").PointWeights!.SameAs(Panel(with, "P3").PointWeights!));
    }

    [Fact]
    public void Run_LeakyVariant_IsDetectedOnTheSameData()
    {
        // The check above can fail: with outcomes leaked into the weights, P2's weights depend on
        // P2's and P3's own outcomes, and differ from the honest weights.
        var honest = Backtest.Run(History(), BacktestOptions.Default);
        var leaky = Leaky(History());
        var leakyP3Changed = Leaky(History(p3Outcome: 340));
        var leakyP2Changed = Leaky(History(p2Outcome: 260));

        Assert.False(Panel(honest, "P2").PointWeights!.SameAs(Panel(leaky, "P2").PointWeights!));
        Assert.False(Panel(leaky, "P2").PointWeights!.SameAs(Panel(leakyP3Changed, "P2").PointWeights!));
        Assert.False(Panel(leaky, "P1").PointWeights!.SameAs(Panel(leakyP2Changed, "P1").PointWeights!));
        Assert.NotEqual(Panel(honest, "P2").Targets[0].Weighted.Value, Panel(leaky, "P2").Targets[0].Weighted.Value);
    }

    [Fact]
    public void Run_WeightsComeFromEarlierPanelsOnly()
    {
        var result = Backtest.Run(History(), BacktestOptions.Default);

        // P1 has no history: pool-average weights for all, so weighted = equal.
        var p1 = Panel(result, "P1");
        Assert.Equal(0, p1.HistoryItems);
        Assert.All(p1.PointWeights!.Experts, e => Assert.Equal(1.0 / 3, e.Weight, 12));
        Assert.Equal(p1.Comparison.EqualScaledMae!.Value, p1.Comparison.WeightedScaledMae!.Value, 12);

        // P2 sees exactly P1's three items: records good 0.1, mid 1, bad 3 (scaled by 10).
        var p2 = Panel(result, "P2");
        Assert.Equal(3, p2.HistoryItems);
        var expected = TrackRecordWeights.Compute([new("bad", 1, 3), new("good", 1, 0.1), new("mid", 1, 1)], ["bad", "good", "mid"]);
        Assert.True(expected.SameAs(p2.PointWeights!));
        Assert.True(p2.PointWeights!.WeightOf("good") > p2.PointWeights.WeightOf("bad"));

        // The weighted consensus is the statistics core's weighted consensus with those weights.
        var answers = new[] { 230.0, 199, 215 };
        var weights = new[] { expected.WeightOf("bad"), expected.WeightOf("good"), expected.WeightOf("mid") };
        var target = p2.Targets[0];
        Assert.Equal(Consensus.ForPoint(answers, FeedbackSettings.Default, weights).Value, target.Weighted.Value, 12);
        Assert.Equal(Consensus.ForPoint(answers, FeedbackSettings.Default).Value, target.Equal.Value, 12);

        // P3 sees P1 and P2 (six items).
        Assert.Equal(6, Panel(result, "P3").HistoryItems);
    }

    [Fact]
    public void Run_Comparison_IsMeanScaledErrorOfEachConsensus()
    {
        var result = Backtest.Run(History(), BacktestOptions.Default);
        var errors = result.Panels.SelectMany(p => p.Targets).ToList();
        Assert.Equal(3, result.Pooled.N);
        Assert.Equal(errors.Average(t => Math.Abs(t.Equal.Value - t.Outcome) / 10), result.Pooled.EqualScaledMae!.Value, 12);
        Assert.Equal(errors.Average(t => Math.Abs(t.Weighted.Value - t.Outcome) / 10), result.Pooled.WeightedScaledMae!.Value, 12);
        Assert.Equal(result.Pooled.WeightedScaledMae - result.Pooled.EqualScaledMae, result.Pooled.Difference);

        // P2's equal consensus is the median of 199, 215, 230 = 215: error 15 / 10.
        Assert.Equal(1.5, Panel(result, "P2").Comparison.EqualScaledMae!.Value, 12);
    }

    [Theory]
    [InlineData("2020-01-01", "2020-06-01", "2020-06-02", true)]
    [InlineData("2020-01-01", "2020-06-02", "2020-06-02", false)]
    [InlineData("2020-06-02", "2020-01-01", "2020-06-02", false)]
    [InlineData("2020-06-03", "2020-01-01", "2020-06-02", false)]
    public void IsKnownBefore_NeedsBothOutcomeAndOwnPanelBeforeTheClose(string ownClose, string known, string close, bool expected)
    {
        var item = TestItems.Point(1, 1, closedOn: DateOnly.Parse(ownClose, System.Globalization.CultureInfo.InvariantCulture), knownOn: DateOnly.Parse(known, System.Globalization.CultureInfo.InvariantCulture));
        Assert.Equal(expected, Backtest.IsKnownBefore(item, DateOnly.Parse(close, System.Globalization.CultureInfo.InvariantCulture)));
    }

    [Fact]
    public void Run_RangePanel_UsesIntervalScoreWeightsAndQuantileAveraging()
    {
        var early = new DateOnly(2020, 1, 1);
        var later = new DateOnly(2022, 1, 1);
        ScoredItem[] items =
        [
            // Earlier range panel: A's interval [95, 105] holds 100; B's [80, 90] misses it by 10.
            TestItems.Range(95, 100, 105, 100, 5, expert: "A", panel: "R1", closedOn: early, knownOn: new(2021, 1, 1)),
            TestItems.Range(80, 85, 90, 100, 5, expert: "B", panel: "R1", closedOn: early, knownOn: new(2021, 1, 1)),
            TestItems.Range(190, 200, 210, 205, 5, expert: "A", panel: "R2", period: "2023", closedOn: later),
            TestItems.Range(150, 170, 180, 205, 5, expert: "B", panel: "R2", period: "2023", closedOn: later),
        ];
        var r2 = Panel(Backtest.Run(items, BacktestOptions.Default), "R2");
        Assert.Null(r2.PointWeights);

        // Scaled interval scores (α = 0.2): A 10 / 5 = 2; B (10 + 10·10) / 5 = 22 (Gneiting & Raftery 2007, eq. 43).
        var expected = TrackRecordWeights.Compute([new("A", 1, 2), new("B", 1, 22)], ["A", "B"]);
        Assert.True(expected.SameAs(r2.RangeWeights!));
        var answers = new[] { new RangeAnswer(190, 200, 210), new RangeAnswer(150, 170, 180) };
        var consensus = Consensus.ForRange(answers, FeedbackSettings.Default, expected.Weights);
        Assert.Equal(consensus, r2.Targets[0].Weighted);
        Assert.Equal(ConsensusMethod.WeightedQuantileAverage, r2.Targets[0].Weighted.Method);
    }

    [Fact]
    public void Run_TargetWithoutScale_IsListedButNotScored()
    {
        ScoredItem[] items = [TestItems.Point(5, 4, double.NaN, expert: "A"), TestItems.Point(6, 4, double.NaN, expert: "B")];
        var result = Backtest.Run(items, BacktestOptions.Default);
        var panel = Assert.Single(result.Panels);
        Assert.Single(panel.Targets);
        Assert.Null(panel.Targets[0].EqualScaledError);
        Assert.Equal(0, result.Pooled.N);
        Assert.Null(result.Pooled.Difference);
    }

    [Fact]
    public void Run_WithBenchmarks_EachRebuiltConsensusHasItsSkillAgainstNoChangeAndTheBestBenchmark()
    {
        // One panel, two question-periods, three experts, scale 10, no-change forecast 100 for both; by hand:
        // equal consensus = median of {104, 106, 120} = 106 (2025) and of {108, 110, 111} = 110 (2026), no outlier by Tukey's fences.
        ScoredItem[] items =
        [
            TestItems.Point(104, 110, 10, 100, expert: "A", period: "2025"), TestItems.Point(106, 110, 10, 100, expert: "B", period: "2025"),
            TestItems.Point(120, 110, 10, 100, expert: "C", period: "2025"),
            TestItems.Point(108, 112, 10, 100, expert: "A", period: "2026"), TestItems.Point(110, 112, 10, 100, expert: "B", period: "2026"),
            TestItems.Point(111, 112, 10, 100, expert: "C", period: "2026"),
        ];
        // Benchmarks: drift 109 and 111 (errors 1 and 1), mean 100 and 100; another panel's item must not count.
        ScoredItem[] benchmarks =
        [
            TestItems.Point(109, 110, 10, 100, expert: "benchmark:drift", period: "2025"), TestItems.Point(111, 112, 10, 100, expert: "benchmark:drift", period: "2026"),
            TestItems.Point(100, 110, 10, 100, expert: "benchmark:mean", period: "2025"), TestItems.Point(100, 112, 10, 100, expert: "benchmark:mean", period: "2026"),
            TestItems.Point(500, 110, 10, 100, expert: "benchmark:drift", panel: "other", period: "2025"),
        ];
        var panel = Assert.Single(Backtest.Run(BacktestPanel.FromItems(items), items, BacktestOptions.Default, benchmarks).Panels);
        var skill = panel.EqualSkill!;

        // Scaled MAE: consensus (|106 − 110| + |110 − 112|) / 10 / 2 = 0.3; no change (10 + 12) / 10 / 2 = 1.1; drift (1 + 1) / 10 / 2 = 0.1.
        Assert.Equal(2, skill.Consensus.NScaledNaive);
        Assert.Equal(1.1, skill.Consensus.ScaledNaiveMae!.Value, 12);
        Assert.Equal(1 - (0.3 / 1.1), skill.SkillVsNaive!.Value, 12);
        Assert.Equal("benchmark:drift", skill.Benchmarks.Best);
        Assert.Equal(0.1, skill.Benchmarks.BestScaledMae!.Value, 12);
        Assert.Equal(1 - (0.3 / 0.1), skill.SkillVsBest!.Value, 12);
        // No history: the weights are equal, so the weighted consensus scores the same.
        Assert.Equal(skill.SkillVsBest, panel.WeightedSkill!.SkillVsBest);

        // Without benchmarks, the skill against no change stands and there is no best benchmark.
        var plain = Assert.Single(Backtest.Run(BacktestPanel.FromItems(items), items, BacktestOptions.Default).Panels);
        Assert.Equal(skill.SkillVsNaive, plain.EqualSkill!.SkillVsNaive);
        Assert.Null(plain.EqualSkill.SkillVsBest);
    }
}
