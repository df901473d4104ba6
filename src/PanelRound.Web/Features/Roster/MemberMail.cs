using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

/// <summary>The messages a panel sends its members: the invitation with the personal link, a new link, a reminder.</summary>
public static class MemberMail
{
    /// <summary>The invitation to a panel, with the personal link (a full URL).</summary>
    public static MailMessageData Invitation(Expert expert, Panel panel, string link) =>
        new(expert.Email, expert.Name, $"Invitation: {panel.Title}",
            $"Dear {expert.Name},\n\nyou are invited to the expert panel \"{panel.Title}\". Your personal link (do not forward it):\n\n{link}\n\nYour answers are anonymous to the other experts.\n");

    /// <summary>A re-issued personal link (a full URL); the previous one no longer works.</summary>
    public static MailMessageData NewLink(Expert expert, Panel panel, string link) =>
        new(expert.Email, expert.Name, $"Your new link: {panel.Title}",
            $"Dear {expert.Name},\n\nhere is your new personal link to \"{panel.Title}\"; the previous one no longer works:\n\n{link}\n");

    /// <summary>A reminder to answer the open round before its deadline.</summary>
    public static MailMessageData Reminder(Expert expert, Panel panel, Round round) =>
        new(expert.Email, expert.Name, $"Reminder: round {round.Number} of {panel.Title}",
            $"Dear {expert.Name},\n\nround {round.Number} of \"{panel.Title}\" closes on {round.ClosesAt:yyyy-MM-dd HH:mm} UTC and we have not received your answers yet. Please use the personal link you were sent; ask the facilitator for a new one if you cannot find it.\n");
}
