using System.Globalization;
using System.Text;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

/// <summary>Whom experts contact about a panel: a name, an address, or both.</summary>
public sealed record MailContact(string? Name, string? Email)
{
    /// <summary>"Name (address)", the name or the address alone, or null when neither is known.</summary>
    public string? Text => (Name, Email) switch
    {
        ({ Length: > 0 } n, { Length: > 0 } e) => $"{n} ({e})",
        ({ Length: > 0 } n, _) => n,
        (_, { Length: > 0 } e) => e,
        _ => null,
    };
}

/// <summary>
/// The messages a panel sends its members: the invitation with the personal link, a new link, a reminder.
/// Each names the panel, says where the rounds stand (the open round and its deadline in UTC and in the
/// panel's time zone, or that the first round has not opened yet), how anonymity works and whom to contact.
/// </summary>
public static class MemberMail
{
    /// <summary>
    /// The invitation to a panel, with the personal link (a full URL); <paramref name="openRound"/> is the panel's open
    /// round, if any, and <paramref name="closedRounds"/> how many of its rounds have closed.
    /// </summary>
    public static MailMessageData Invitation(Expert expert, Panel panel, Round? openRound, int closedRounds, MailContact contact, string link)
    {
        var body = new StringBuilder()
            .Append(CultureInfo.InvariantCulture, $"Dear {expert.Name},\n\n")
            .Append(CultureInfo.InvariantCulture, $"you are invited to the expert panel \"{panel.Title}\".\n\n")
            .Append(RoundsText(panel, openRound, closedRounds)).Append("\n\n")
            .Append("Your personal link (it is yours alone: do not forward it):\n\n")
            .Append(link).Append("\n\n")
            .Append(Anonymity(panel)).Append("\n\n")
            .Append(ContactText(contact)).Append('\n');
        return new(expert.Email, expert.Name, $"Invitation: {panel.Title}", body.ToString());
    }

    /// <summary>A re-issued personal link (a full URL); the previous one no longer works.</summary>
    public static MailMessageData NewLink(Expert expert, Panel panel, Round? openRound, int closedRounds, MailContact contact, string link)
    {
        var body = new StringBuilder()
            .Append(CultureInfo.InvariantCulture, $"Dear {expert.Name},\n\n")
            .Append(CultureInfo.InvariantCulture, $"here is your new personal link to the expert panel \"{panel.Title}\"; the previous one no longer works:\n\n")
            .Append(link).Append("\n\n")
            .Append(RoundsText(panel, openRound, closedRounds)).Append("\n\n")
            .Append(Anonymity(panel)).Append("\n\n")
            .Append(ContactText(contact)).Append('\n');
        return new(expert.Email, expert.Name, $"Your new link: {panel.Title}", body.ToString());
    }

    /// <summary>A reminder to answer the open round before its deadline.</summary>
    public static MailMessageData Reminder(Expert expert, Panel panel, Round round, MailContact contact) =>
        new(expert.Email, expert.Name, $"Reminder: round {round.Number} of {panel.Title}",
            $"Dear {expert.Name},\n\nround {round.Number} of the expert panel \"{panel.Title}\" closes on {PanelTimes.UtcAndLocal(round.ClosesAt, panel.TimeZone)}, "
            + "and we have not received your answers yet. Please use the personal link you were sent.\n\n"
            + Anonymity(panel) + "\n\n"
            + ContactText(contact, lostLink: true) + "\n");

    /// <summary>Where the rounds stand, for a message.</summary>
    private static string RoundsText(Panel panel, Round? open, int closedRounds) => open is not null
        ? $"Round {open.Number} is open. Please answer by {PanelTimes.UtcAndLocal(open.ClosesAt, panel.TimeZone)}; until then you can revise your answers as often as you like."
        : closedRounds == 0
            ? "The first round has not opened yet: the facilitator opens it and sets its deadline. Until then your link shows the panel's brief; the questions appear once the round is open."
            : $"Round {closedRounds} has closed and the next round has not opened yet; your link shows the questions once it is open.";

    private static string Anonymity(Panel panel) =>
        "How anonymity works: your answers are anonymous. The other experts never see your name or any individual answer, only group statistics "
        + $"(from at least {panel.Settings.MinimumGroupSize.ToString(CultureInfo.InvariantCulture)} answers) and rationales without names; "
        + "the facilitator reads answers under a random panel code.";

    private static string ContactText(MailContact contact, bool lostLink = false) => contact.Text is { } who
        ? $"Questions about the panel{(lostLink ? ", or a lost link" : "")}: contact {who}."
        : $"Questions about the panel{(lostLink ? ", or a lost link" : "")}: reply to the facilitator who invited you.";
}
