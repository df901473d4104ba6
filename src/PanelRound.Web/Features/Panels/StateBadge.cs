using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Panels;

/// <summary>
/// One way to show a state on every page: the same words and the same colour for a panel
/// (Draft, Running, Concluded), a round (Open, Closed) and a personal link (Not opened yet, Active,
/// Revoked, Closed with the panel). Rendered by the partial <c>_StateBadge</c>
/// (<c>&lt;partial name="_StateBadge" model="StateBadge.Of(panel.State)" /&gt;</c>); the colour of each
/// tone is in site.css (<c>.state-badge.state-{tone}</c>), always with the word, never alone.
/// </summary>
/// <param name="Text">The word shown.</param>
/// <param name="Tone">The colour family: <c>draft</c>, <c>live</c>, <c>done</c>, <c>past</c>, <c>waiting</c>, <c>stopped</c>.</param>
/// <param name="Title">A longer explanation, shown on hover.</param>
public sealed record StateBadge(string Text, string Tone, string? Title = null)
{
    public static StateBadge Of(PanelState state) => state switch
    {
        PanelState.Running => new("Running", "live", "A round is open or the panel is between rounds."),
        PanelState.Concluded => new("Concluded", "done", "The consensus is published; the panel is read-only."),
        _ => new("Draft", "draft", "Being set up: no round has opened yet."),
    };

    public static StateBadge Of(RoundState state) => state == RoundState.Open
        ? new("Open", "live", "Experts can answer.")
        : new("Closed", "past", "Experts can no longer answer; its feedback is frozen.");

    /// <summary>A personal link's state; on a concluded panel every link that was not revoked is closed with the panel.</summary>
    public static StateBadge OfLink(MembershipState state, PanelState panel) => state switch
    {
        MembershipState.Revoked => new("Revoked", "stopped", "The link no longer opens anything; its answers do not count."),
        _ when panel == PanelState.Concluded => new("Closed with the panel", "past", "The panel has concluded: the link shows the expert's answers, read-only."),
        MembershipState.Active => new("Active", "live", "The expert has opened the link."),
        _ => new("Not opened yet", "waiting", "The link was issued; the expert has not opened it yet."),
    };
}
