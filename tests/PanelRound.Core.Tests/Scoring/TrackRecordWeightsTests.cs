using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

public class TrackRecordWeightsTests
{
    private static double Sum(WeightSet set) => set.Experts.Sum(e => e.Weight);

    [Fact]
    public void Compute_HandExample_FollowsShrinkageFormula()
    {
        // ē = (10·0.5 + 10·1.5) / 20 = 1; k = 5: ẽ_A = (5 + 5) / 15 = 2/3, ẽ_B = (15 + 5) / 15 = 4/3;
        // weights ∝ 1.5 and 0.75 → 2/3 and 1/3.
        var set = TrackRecordWeights.Compute([new("A", 10, 0.5), new("B", 10, 1.5)], ["A", "B"]);
        Assert.Equal(1, set.PoolMeanError!.Value, 12);
        Assert.Equal(20, set.PoolN);
        Assert.Equal(2.0 / 3, set.Experts[0].ShrunkError, 12);
        Assert.Equal(4.0 / 3, set.Experts[1].ShrunkError, 12);
        Assert.Equal(2.0 / 3, set.WeightOf("A"), 12);
        Assert.Equal(1.0 / 3, set.WeightOf("B"), 12);
    }

    [Fact]
    public void Compute_OneLuckyForecast_BuysLittleWeight()
    {
        ExpertRecord[] pool = [new("X", 100, 1), new("Y", 100, 1)];
        var lucky = TrackRecordWeights.Compute([.. pool, new("L", 1, 0.01)], ["L", "X", "Y"]);
        var proven = TrackRecordWeights.Compute([.. pool, new("L", 50, 0.01)], ["L", "X", "Y"]);

        // n = 1: ẽ ≈ (0.01 + 5·ē) / 6, barely below ē; n = 50: ẽ ≈ (0.5 + 5·ē) / 55, a tenth of ē.
        Assert.True(lucky.WeightOf("L") < 0.45, $"lucky weight {lucky.WeightOf("L")}");
        Assert.True(proven.WeightOf("L") > 0.75, $"proven weight {proven.WeightOf("L")}");
        Assert.True(proven.WeightOf("L") > 2 * lucky.WeightOf("L"));
    }

    [Fact]
    public void Compute_NoRecord_GetsTheWeightOfAPoolAverageExpert()
    {
        // C's record equals ē = (10·0.5 + 30·1.5 + 20·x) / 60 when x = ē; solve: ē = 50/40 = 1.25.
        ExpertRecord[] records = [new("A", 10, 0.5), new("B", 30, 1.5), new("C", 20, 1.25)];
        var set = TrackRecordWeights.Compute(records, ["A", "B", "C", "New"]);
        Assert.Equal(1.25, set.PoolMeanError!.Value, 12);
        Assert.Equal(set.WeightOf("C"), set.WeightOf("New"), 12);
        Assert.Equal(1.25, set.Experts.Single(e => e.ExpertKey == "New").ShrunkError, 12);
        Assert.False(set.Experts.Single(e => e.ExpertKey == "New").HasRecord);
        Assert.Equal(1, Sum(set), 12);
    }

    [Fact]
    public void Compute_PoolIncludesExpertsNotOnThePanel()
    {
        // Only A is on the panel with B; the pool mean still counts Z: ē = (10·1 + 10·1 + 80·3) / 100 = 2.6.
        var set = TrackRecordWeights.Compute([new("A", 10, 1), new("B", 10, 1), new("Z", 80, 3)], ["A", "B"]);
        Assert.Equal(2.6, set.PoolMeanError!.Value, 12);
        Assert.Equal(0.5, set.WeightOf("A"), 12);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(0.7)]
    [InlineData(3.0)]
    public void Compute_EqualErrors_GiveEqualWeights(double error)
    {
        var set = TrackRecordWeights.Compute([new("A", 3, error), new("B", 40, error), new("C", 7, error)], ["A", "B", "C"]);
        Assert.All(set.Experts, e => Assert.Equal(1.0 / 3, e.Weight, 12));
    }

    [Fact]
    public void Compute_NoRecords_GiveEqualWeights()
    {
        var set = TrackRecordWeights.Compute([], ["A", "B", "C", "D"]);
        Assert.Null(set.PoolMeanError);
        Assert.All(set.Experts, e => Assert.Equal(0.25, e.Weight, 12));
    }

    [Fact]
    public void Compute_PerfectRecordWithoutShrinkage_IsFlooredNotInfinite()
    {
        // k = 0 and error 0: the floor 1e-6·ē keeps the weight finite, a million times ē's weight.
        var set = TrackRecordWeights.Compute([new("A", 5, 0), new("B", 5, 2)], ["A", "B"], pseudoForecasts: 0);
        var a = set.Experts[0];
        var b = set.Experts[1];
        Assert.Equal(1e-6 * 1.0, a.ShrunkError, 15);
        Assert.Equal(2 / 1e-6, a.Weight / b.Weight, 3);
        Assert.Equal(1, Sum(set), 12);
    }

    [Fact]
    public void Compute_NoShrinkage_WeightsAreInverseErrors()
    {
        var set = TrackRecordWeights.Compute([new("A", 5, 1), new("B", 1, 3)], ["A", "B"], pseudoForecasts: 0);
        Assert.Equal(0.75, set.WeightOf("A"), 12);
        Assert.Equal(0.25, set.WeightOf("B"), 12);
    }

    [Fact]
    public void Compute_DuplicateRecord_Throws()
    {
        Assert.Throws<ArgumentException>(() => TrackRecordWeights.Compute([new("A", 1, 1), new("A", 2, 1)], ["A"]));
    }

    [Fact]
    public void Compute_DuplicatePanelExpert_Throws()
    {
        Assert.Throws<ArgumentException>(() => TrackRecordWeights.Compute([], ["A", "A"]));
    }

    [Fact]
    public void Records_ScaledAbsoluteError_FromFinalRoundItemsWithScale()
    {
        ScoredItem[] items =
        [
            TestItems.Point(104, 100, 2, expert: "A", period: "2025"),
            TestItems.Point(98, 100, 2, expert: "A", period: "2026"),
            TestItems.Point(200, 100, 2, expert: "A", period: "2027", isFinal: false),
            TestItems.Point(200, 100, double.NaN, expert: "A", period: "2028"),
            TestItems.Range(90, 100, 110, 115, 5, expert: "B"),
        ];
        var records = TrackRecordWeights.Records(items, TrackRecordMeasure.ScaledAbsoluteError);
        Assert.Equal([new ExpertRecord("A", 2, 1.5), new ExpertRecord("B", 1, 3)], records);

        // Interval score (α = 0.2) of [90, 110] at 115 is 70 (Gneiting & Raftery 2007, section 6.2); scaled by 5: 14.
        var ranges = TrackRecordWeights.Records(items, TrackRecordMeasure.ScaledIntervalScore);
        Assert.Equal([new ExpertRecord("B", 1, 14)], ranges);
    }
}
