using System.Globalization;

namespace PanelRound.Core.Statistics;

/// <summary>Why a question may stop, or not.</summary>
public enum StopReason
{
    /// <summary>No stopping criterion is met: run another round.</summary>
    KeepGoing,

    /// <summary>The relative IQR is at or below the consensus threshold with enough answers.</summary>
    ConsensusReached,

    /// <summary>The answers are stable between the last two rounds.</summary>
    Stable,

    /// <summary>The panel's round cap is reached.</summary>
    RoundCapReached,
}

/// <summary>A per-question stop suggestion for the facilitator, who decides.</summary>
/// <param name="Reason">The criterion that applies, or <see cref="StopReason.KeepGoing"/>.</param>
/// <param name="ShouldStop">True unless the reason is <see cref="StopReason.KeepGoing"/>.</param>
/// <param name="Explanation">One short English sentence with the figures behind the suggestion.</param>
public sealed record StopSuggestion(StopReason Reason, bool ShouldStop, string Explanation);

/// <summary>One target period of a question with the stop suggestion of its latest round (null before any round has answers).</summary>
/// <param name="Period">The target period, as shown.</param>
/// <param name="Suggestion">Its suggestion.</param>
public sealed record PeriodStop(string Period, StopSuggestion? Suggestion);

/// <summary>A question's stop suggestion over all its target periods.</summary>
/// <param name="Reason">The reason that holds for the question.</param>
/// <param name="Explanation">One short English sentence for the facilitator.</param>
public sealed record QuestionStop(StopReason Reason, string Explanation);

/// <summary>Suggests whether a question needs another round.</summary>
/// <remarks>
/// The criteria are checked in this order and the first that holds is reported: consensus
/// (<see cref="ConvergenceAssessment.ConsensusReached"/>), stability
/// (<see cref="StabilityAssessment.IsStable"/>), the round cap (round number ≥ cap, default 3).
/// Consensus comes first because it is the stronger statement about the answers; stability
/// without consensus means opinion has settled on a spread that further rounds are unlikely to
/// narrow. Figures in the explanation use the invariant culture.
/// </remarks>
public static class StopAdvice
{
    /// <summary>Suggests stopping or continuing after round <paramref name="roundNumber"/>.</summary>
    /// <param name="convergence">This round's convergence.</param>
    /// <param name="stability">Stability between this round and the previous one; null in round 1.</param>
    /// <param name="roundNumber">The round just closed, ≥ 1.</param>
    /// <param name="roundCap">The panel's maximum number of rounds, ≥ 1; default 3.</param>
    public static StopSuggestion Suggest(ConvergenceAssessment convergence, StabilityAssessment? stability, int roundNumber, int roundCap = 3)
    {
        ArgumentNullException.ThrowIfNull(convergence);
        Preconditions.CheckInRange(roundNumber, 1, int.MaxValue);
        Preconditions.CheckInRange(roundCap, 1, int.MaxValue);
        var c = CultureInfo.InvariantCulture;

        if (convergence.ConsensusReached)
        {
            return new StopSuggestion(
                StopReason.ConsensusReached,
                true,
                string.Format(c, "Consensus reached: relative IQR {0:0.0}% is at or below the {1:0.0}% threshold with {2} answers.", 100 * convergence.RelativeIqr, 100 * convergence.Threshold, convergence.N));
        }

        if (stability is { IsStable: true })
        {
            return new StopSuggestion(
                StopReason.Stable,
                true,
                string.Format(c, "Stable: {0} of {1} experts moved by more than {2:0.#}%, and the signed-rank test finds no shift (p = {3:0.###}).", stability.MovedCount, stability.PairedCount, 100 * stability.MoveThreshold, stability.Wilcoxon?.PValue));
        }

        if (roundNumber >= roundCap)
        {
            return new StopSuggestion(
                StopReason.RoundCapReached,
                true,
                string.Format(c, "Round cap reached: round {0} of at most {1}.", roundNumber, roundCap));
        }

        var dispersion = convergence.RelativeIqr is { } r
            ? string.Format(c, "relative IQR {0:0.0}% is above the {1:0.0}% threshold", 100 * r, 100 * convergence.Threshold)
            : "relative IQR is undefined (median 0)";
        if (convergence.RelativeIqr is not null && convergence.RelativeIqr <= convergence.Threshold)
        {
            dispersion = string.Format(c, "only {0} answers, fewer than the {1} consensus needs", convergence.N, convergence.MinimumN);
        }

        return new StopSuggestion(
            StopReason.KeepGoing,
            false,
            string.Format(c, "Keep going: {0}; round {1} of at most {2}.", dispersion, roundNumber, roundCap));
    }

    /// <summary>A question's suggestion: it may stop when every target period may stop; otherwise the weakest period's reason is the question's.</summary>
    /// <param name="periods">The question's target periods with their suggestions, in the order they are shown.</param>
    /// <remarks>
    /// In order: no period with a suggestion keeps going ("no round has answers yet"); consensus in
    /// every period is consensus; consensus or stability in every period is stability; otherwise a
    /// round cap reached in any period ends the question; otherwise another round is suggested for
    /// the periods that keep going.
    /// </remarks>
    public static QuestionStop ForQuestion(IReadOnlyList<PeriodStop> periods)
    {
        ArgumentNullException.ThrowIfNull(periods);
        var suggestions = periods.Select(p => p.Suggestion).OfType<StopSuggestion>().ToList();
        if (suggestions.Count == 0)
        {
            return new QuestionStop(StopReason.KeepGoing, "No round has answers yet.");
        }
        if (suggestions.All(s => s.Reason == StopReason.ConsensusReached))
        {
            return new QuestionStop(StopReason.ConsensusReached, "Consensus reached in every target period.");
        }
        if (suggestions.All(s => s.Reason is StopReason.ConsensusReached or StopReason.Stable))
        {
            return new QuestionStop(StopReason.Stable, "Every target period has reached consensus or stable answers.");
        }
        if (suggestions.Any(s => s.Reason == StopReason.RoundCapReached))
        {
            return new QuestionStop(StopReason.RoundCapReached, "The round cap is reached.");
        }
        var open = periods.Where(p => p.Suggestion?.Reason == StopReason.KeepGoing).Select(p => p.Period);
        return new QuestionStop(StopReason.KeepGoing, "Another round may help for " + string.Join(", ", open) + ".");
    }
}
