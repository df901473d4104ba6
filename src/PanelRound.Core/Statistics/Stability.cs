namespace PanelRound.Core.Statistics;

/// <summary>One expert's answers to the same question-period in two consecutive rounds.</summary>
/// <param name="Previous">The answer in round k − 1.</param>
/// <param name="Current">The answer in round k.</param>
public sealed record PairedAnswer(double Previous, double Current);

/// <summary>How much the answers moved between two rounds, over the experts who answered both.</summary>
/// <param name="PairedCount">The number of experts who answered both rounds.</param>
/// <param name="MovedCount">The number whose answer moved by more than the move threshold.</param>
/// <param name="ShareMoved">MovedCount / PairedCount; 0 when there are no pairs.</param>
/// <param name="Wilcoxon">The signed-rank test on Current − Previous; null when there are no pairs.</param>
/// <param name="IsStable">See <see cref="Stability"/> for the rule.</param>
/// <param name="MoveThreshold">The relative move above which an answer counts as moved.</param>
/// <param name="ShareThreshold">The share of movers at or below which the group may count as stable.</param>
/// <param name="SignificanceLevel">The Wilcoxon level below which a systematic shift is declared.</param>
public sealed record StabilityAssessment(
    int PairedCount,
    int MovedCount,
    double ShareMoved,
    WilcoxonResult? Wilcoxon,
    bool IsStable,
    double MoveThreshold,
    double ShareThreshold,
    double SignificanceLevel);

/// <summary>Stability of the answers between rounds k − 1 and k.</summary>
/// <remarks>
/// <para>Moved: an expert moved when |current − previous| / |previous| &gt; the move threshold
/// (default 15%). When the previous answer is 0 the relative move is undefined; the expert counts
/// as moved exactly when the current answer differs from 0.</para>
/// <para>Stable: the group is stable when both (a) the share of experts who moved is at most the
/// share threshold (default 15%) and (b) the Wilcoxon signed-rank test on the paired differences
/// finds no systematic shift (two-sided p ≥ the significance level, default 0.05), and at least
/// two experts answered both rounds. Rule (a) is the 15% change criterion of Scheibe, Skutsch
/// &amp; Schofer ("Experiments in Delphi methodology", in Linstone &amp; Turoff, "The Delphi Method", 1975)
/// applied to individual answers; (b) is the paired non-parametric test recommended for Delphi
/// stability (e.g. Kalaian &amp; Kasim, Practical Assessment, Research &amp; Evaluation 17(5), 2012).
/// Requiring both is the cautious choice: stopping is suggested only when few experts revise
/// and the revisions do not push the group one way. With few pairs the test has little power
/// (for N ≤ 5 no two-sided p is below 0.05), so (a) then decides.</para>
/// </remarks>
public static class Stability
{
    /// <summary>Assesses stability from the paired answers of the experts who answered both rounds.</summary>
    /// <param name="pairs">One pair per expert, finite values.</param>
    /// <param name="moveThreshold">The relative move above which an answer counts as moved, in [0, 10]; default 0.15.</param>
    /// <param name="shareThreshold">The largest share of movers still stable, in [0, 1]; default 0.15.</param>
    /// <param name="significanceLevel">The Wilcoxon significance level, in (0, 1); default 0.05.</param>
    public static StabilityAssessment Assess(
        IReadOnlyList<PairedAnswer> pairs,
        double moveThreshold = 0.15,
        double shareThreshold = 0.15,
        double significanceLevel = 0.05)
    {
        ArgumentNullException.ThrowIfNull(pairs);
        Preconditions.CheckInRange(moveThreshold, 0, 10);
        Preconditions.CheckInRange(shareThreshold, 0, 1);
        Preconditions.CheckInRange(significanceLevel, double.Epsilon, 1 - double.Epsilon);

        var n = pairs.Count;
        var differences = new double[n];
        var moved = 0;
        for (var i = 0; i < n; i++)
        {
            var pair = pairs[i] ?? throw new ArgumentException($"Pair {i} is null.", nameof(pairs));
            var previous = Preconditions.CheckFinite(pair.Previous, nameof(pairs));
            var current = Preconditions.CheckFinite(pair.Current, nameof(pairs));
            differences[i] = current - previous;
            if (HasMoved(previous, current, moveThreshold))
            {
                moved++;
            }
        }

        if (n == 0)
        {
            return new StabilityAssessment(0, 0, 0, null, false, moveThreshold, shareThreshold, significanceLevel);
        }

        var wilcoxon = WilcoxonSignedRank.Test(differences);
        var share = (double)moved / n;
        var stable = n >= 2 && share <= shareThreshold && wilcoxon.PValue >= significanceLevel;
        return new StabilityAssessment(n, moved, share, wilcoxon, stable, moveThreshold, shareThreshold, significanceLevel);
    }

    /// <summary>True when |current − previous| / |previous| &gt; threshold; from a previous 0, any change is a move.</summary>
    public static bool HasMoved(double previous, double current, double moveThreshold)
    {
        if (previous == 0)
        {
            return current != 0;
        }

        return Math.Abs(current - previous) > moveThreshold * Math.Abs(previous);
    }
}
