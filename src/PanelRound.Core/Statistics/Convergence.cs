namespace PanelRound.Core.Statistics;

/// <summary>Convergence of one question-period's answers: relative IQR, its change, and whether consensus is reached.</summary>
/// <param name="RelativeIqr">This round's IQR / |median|; null when the median is 0 (or unknown).</param>
/// <param name="PreviousRelativeIqr">The previous round's relative IQR, when known.</param>
/// <param name="Change">RelativeIqr − PreviousRelativeIqr; null when either is missing. Negative means the answers drew together.</param>
/// <param name="N">The number of answers this round.</param>
/// <param name="Threshold">The relative IQR at or below which consensus counts as reached.</param>
/// <param name="MinimumN">The number of answers consensus needs.</param>
/// <param name="ConsensusReached">RelativeIqr ≤ Threshold and N ≥ MinimumN.</param>
public sealed record ConvergenceAssessment(
    double? RelativeIqr,
    double? PreviousRelativeIqr,
    double? Change,
    int N,
    double Threshold,
    int MinimumN,
    bool ConsensusReached);

/// <summary>Convergence between rounds, judged on the relative interquartile range.</summary>
/// <remarks>
/// The relative IQR (IQR / |median|) is a dispersion measure without units, so one threshold
/// serves prices, rents and yields alike. Consensus is reached when it is at most the threshold
/// (default 10%) with at least <c>minimumN</c> answers (default 5); a null relative IQR (median
/// 0) never reaches consensus, because the measure is undefined there. The IQR as a Delphi
/// consensus criterion is discussed in H. von der Gracht, "Consensus measurement in Delphi
/// studies", Technological Forecasting and Social Change 79, 1525–1536, 2012.
/// </remarks>
public static class Convergence
{
    /// <summary>Assesses convergence from this round's and the previous round's relative IQR.</summary>
    /// <param name="relativeIqr">This round's relative IQR (e.g. <see cref="PointFeedback.RelativeIqr"/>); finite and ≥ 0 when given.</param>
    /// <param name="previousRelativeIqr">The previous round's relative IQR, or null in round 1; finite and ≥ 0 when given.</param>
    /// <param name="n">The number of answers this round, ≥ 0.</param>
    /// <param name="threshold">The consensus threshold, finite and ≥ 0; default 0.10.</param>
    /// <param name="minimumN">The number of answers consensus needs, ≥ 1; default 5.</param>
    public static ConvergenceAssessment Assess(
        double? relativeIqr,
        double? previousRelativeIqr,
        int n,
        double threshold = 0.10,
        int minimumN = 5)
    {
        if (relativeIqr is { } r)
        {
            Preconditions.CheckInRange(r, 0, double.MaxValue, nameof(relativeIqr));
        }

        if (previousRelativeIqr is { } pr)
        {
            Preconditions.CheckInRange(pr, 0, double.MaxValue, nameof(previousRelativeIqr));
        }

        Preconditions.CheckInRange(n, 0, int.MaxValue);
        Preconditions.CheckInRange(threshold, 0, double.MaxValue);
        Preconditions.CheckInRange(minimumN, 1, int.MaxValue);

        double? change = relativeIqr is { } current && previousRelativeIqr is { } previous ? current - previous : null;
        var reached = relativeIqr is { } value && value <= threshold && n >= minimumN;
        return new ConvergenceAssessment(relativeIqr, previousRelativeIqr, change, n, threshold, minimumN, reached);
    }
}
