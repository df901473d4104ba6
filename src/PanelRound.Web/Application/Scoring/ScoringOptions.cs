using PanelRound.Core.Scoring;

namespace PanelRound.Web.Application.Scoring;

/// <summary>The <c>Scoring</c> configuration section.</summary>
public sealed class ScoringOptions
{
    public const string Section = "Scoring";

    /// <summary>
    /// <c>Scoring:PseudoForecasts</c>: k, the pseudo-forecasts at the pool mean that shrink each
    /// expert's track record (0 or more; default 5), so that one lucky forecast buys little weight.
    /// </summary>
    public double PseudoForecasts { get; set; } = TrackRecordWeights.DefaultPseudoForecasts;

    public bool IsValid => double.IsFinite(PseudoForecasts) && PseudoForecasts >= 0;
}
