using PanelRound.Core.Scoring;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>The <c>Scoring</c> configuration section.</summary>
public sealed class ScoringOptions
{
    public const string Section = "Scoring";

    /// <summary>
    /// <c>Scoring:PseudoForecasts</c>: k, the pseudo-forecasts at the pool mean that shrink each
    /// expert's track record (0 or more; default 5), so that one lucky forecast buys little weight.
    /// </summary>
    public double PseudoForecasts { get; set; } = TrackRecordWeights.DefaultPseudoForecasts;

    /// <summary>
    /// <c>Scoring:ImportPublicationLagDays</c>: when an imported observation has no <c>observed_on</c>,
    /// it counts as known this many days after its period's end (0 to 3650; default 90), and at the
    /// latest on the import day, so that imported history can inform the backtest of later panels.
    /// </summary>
    public int ImportPublicationLagDays { get; set; } = 90;

    public bool IsValid => double.IsFinite(PseudoForecasts) && PseudoForecasts >= 0 && ImportPublicationLagDays is >= 0 and <= 3650;
}
