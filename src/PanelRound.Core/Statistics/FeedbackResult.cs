using System.Diagnostics.CodeAnalysis;

namespace PanelRound.Core.Statistics;

/// <summary>
/// The outcome of a feedback computation: either the feedback, or "withheld" because fewer
/// answers arrived than the minimum group size.
/// </summary>
/// <typeparam name="TFeedback"><see cref="PointFeedback"/> or <see cref="RangeFeedback"/>.</typeparam>
/// <remarks>
/// Withholding is an expected outcome, not an error: with fewer than
/// <see cref="FeedbackSettings.MinimumGroupSize"/> answers (never below 3) the group statistics
/// could reveal an individual answer, so none are computed.
/// </remarks>
public sealed record FeedbackResult<TFeedback>
    where TFeedback : class
{
    private FeedbackResult(int n, int minimumGroupSize, TFeedback? feedback)
    {
        N = n;
        MinimumGroupSize = minimumGroupSize;
        Feedback = feedback;
    }

    /// <summary>The number of answers.</summary>
    public int N { get; }

    /// <summary>The minimum group size the result was computed against.</summary>
    public int MinimumGroupSize { get; }

    /// <summary>True when the feedback is withheld (<see cref="N"/> &lt; <see cref="MinimumGroupSize"/>).</summary>
    [MemberNotNullWhen(false, nameof(Feedback))]
    public bool IsWithheld => Feedback is null;

    /// <summary>The feedback, or null when withheld.</summary>
    public TFeedback? Feedback { get; }

    /// <summary>The feedback; throws <see cref="InvalidOperationException"/> when withheld.</summary>
    public TFeedback GetFeedbackOrThrow() => Feedback
        ?? throw new InvalidOperationException($"Feedback is withheld: {N} answers, fewer than the minimum group size of {MinimumGroupSize}.");

    internal static FeedbackResult<TFeedback> Withheld(int n, int minimumGroupSize) => new(n, minimumGroupSize, null);

    internal static FeedbackResult<TFeedback> Shown(int n, int minimumGroupSize, TFeedback feedback) => new(n, minimumGroupSize, feedback);
}
