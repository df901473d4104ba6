using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

/// <summary>A personal link, shown once when issued: only its hash is stored.</summary>
public sealed record IssuedLink(int MembershipId, string PanelCode, string Token, string Path);

/// <summary>How many messages of a batch (reminders) were sent, and how many failed (each audited).</summary>
public sealed record MailReport(int Sent, int Failed);

/// <summary>
/// A panel's memberships: adding roster experts with a panel code and a personal link, re-issuing
/// and revoking links, and reminding those who have not answered the open round. Every change and
/// every message is audited.
/// </summary>
public sealed class Memberships(PanelRoundDbContext db, TimeProvider clock, IMailer mailer, ILogger<Memberships> log)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private void Log(string actor, string action, string entityType, object entityId, int? panelId, object? details = null) =>
        Audit.Record(db, actor, action, entityType, entityId, panelId, details, Now);

    /// <summary>
    /// Adds an expert of the roster to the panel with a random panel code and a new personal link. The
    /// link is returned (to be shown once) whether or not the invitation could be sent.
    /// </summary>
    public async Task<Result<IssuedLink>> AddMemberAsync(int panelId, int expertId, string actor, string baseUrl, bool sendInvitation = true)
    {
        var panel = await db.Panels.FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<IssuedLink>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Result<IssuedLink>.Conflict("The panel has concluded; no experts can be added.");
        }
        var expert = await db.Experts.FirstOrDefaultAsync(e => e.Id == expertId);
        if (expert is null)
        {
            var errors = new FieldErrors();
            errors.Add("expertId", "Choose an expert from the roster.");
            return Result<IssuedLink>.Invalid(errors);
        }
        if (await db.Memberships.AnyAsync(m => m.PanelId == panelId && m.ExpertId == expertId))
        {
            return Result<IssuedLink>.Conflict($"{expert.Name} is on this panel already; re-issue the link instead.");
        }
        var token = Secrets.NewToken();
        var membership = new PanelMembership
        {
            PanelId = panelId, ExpertId = expertId, PanelCode = (await PanelCodes.NewAsync(db, 1))[0], TokenHash = Secrets.Hash(token),
            TokenIssuedAt = Now, State = MembershipState.Invited, CreatedAt = Now,
        };
        db.Memberships.Add(membership);
        await db.SaveChangesAsync();
        Log(actor, "link.issued", "Membership", membership.Id, panelId, new { membership.PanelCode });
        await db.SaveChangesAsync();
        var link = new IssuedLink(membership.Id, membership.PanelCode, token, "/e/" + token);
        if (sendInvitation)
        {
            var (open, closed, contact) = await MailFactsAsync(panel);
            await TrySendAsync(actor, panelId, membership.Id, "invitation", MemberMail.Invitation(expert, panel, open, closed, contact, baseUrl.TrimEnd('/') + link.Path));
        }
        return Result<IssuedLink>.Ok(link);
    }

    /// <summary>Issues a new token for a membership; the old link stops working at once. The link is returned whether or not its message could be sent.</summary>
    public async Task<Result<IssuedLink>> ReissueLinkAsync(int panelId, int membershipId, string actor, string baseUrl, bool sendInvitation = true)
    {
        var m = await db.Memberships.Include(x => x.Expert).Include(x => x.Panel).FirstOrDefaultAsync(x => x.Id == membershipId && x.PanelId == panelId);
        if (m is null)
        {
            return Result<IssuedLink>.NotFound($"Membership {membershipId} is not on panel {panelId}.");
        }
        if (m.Panel!.State == PanelState.Concluded)
        {
            return Result<IssuedLink>.Conflict("The panel has concluded; its memberships are read-only.");
        }
        var token = Secrets.NewToken();
        m.TokenHash = Secrets.Hash(token);
        m.TokenIssuedAt = Now;
        m.State = MembershipState.Invited;
        // A re-issued link re-admits a revoked expert.
        m.RevokedAt = null;
        Log(actor, "link.reissued", "Membership", m.Id, panelId, new { m.PanelCode });
        await db.SaveChangesAsync();
        var link = new IssuedLink(m.Id, m.PanelCode, token, "/e/" + token);
        if (sendInvitation)
        {
            var (open, closed, contact) = await MailFactsAsync(m.Panel);
            await TrySendAsync(actor, panelId, m.Id, "new-link", MemberMail.NewLink(m.Expert!, m.Panel, open, closed, contact, baseUrl.TrimEnd('/') + link.Path));
        }
        return Result<IssuedLink>.Ok(link);
    }

    public async Task<Result<bool>> RevokeLinkAsync(int panelId, int membershipId, string actor)
    {
        var m = await db.Memberships.Include(x => x.Panel).FirstOrDefaultAsync(x => x.Id == membershipId && x.PanelId == panelId);
        if (m is null)
        {
            return Result<bool>.NotFound($"Membership {membershipId} is not on panel {panelId}.");
        }
        if (m.Panel!.State == PanelState.Concluded)
        {
            return Result<bool>.Conflict("The panel has concluded; its memberships are read-only.");
        }
        m.State = MembershipState.Revoked;
        m.RevokedAt = Now;
        // A new random hash, so that neither the old token nor its cookie can ever match again.
        m.TokenHash = Secrets.Hash(Secrets.NewToken());
        Log(actor, "link.revoked", "Membership", m.Id, panelId, new { m.PanelCode });
        await db.SaveChangesAsync();
        return Result<bool>.Ok(true);
    }

    /// <summary>
    /// Sends a reminder to each active member who has not submitted in the open round; a failed send
    /// does not stop the others. Every send is audited (<c>mail.sent</c> or <c>mail.failed</c>), and
    /// the batch as <c>reminders.sent</c>.
    /// </summary>
    public async Task<Result<MailReport>> SendRemindersAsync(int panelId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).FirstOrDefaultAsync(p => p.Id == panelId);
        var round = panel?.Rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (panel is null)
        {
            return Result<MailReport>.NotFound($"Panel {panelId} does not exist.");
        }
        if (round is null)
        {
            return Result<MailReport>.Conflict("No round is open.");
        }
        var answered = await RoundResponses.AnsweredAsync(db, round.Id);
        var pending = (await db.Memberships.Include(m => m.Expert)
            .Where(m => m.PanelId == panelId && m.State != MembershipState.Revoked).OrderBy(m => m.Id).ToListAsync())
            .Where(m => !answered.Contains(m.Id)).ToList();
        int sent = 0, failed = 0;
        var contact = await ContactOfAsync(db, panel);
        foreach (var m in pending)
        {
            var ok = await TrySendAsync(actor, panelId, m.Id, "reminder", MemberMail.Reminder(m.Expert!, panel, round, contact));
            (sent, failed) = ok ? (sent + 1, failed) : (sent, failed + 1);
        }
        Log(actor, "reminders.sent", "Round", round.Id, panelId, new { round.Number, count = sent, failed });
        await db.SaveChangesAsync();
        return Result<MailReport>.Ok(new MailReport(sent, failed));
    }

    /// <summary>
    /// Whom experts contact about the panel: its contact (name, address) when one is set, otherwise the
    /// staff member who created it (display name and address, when the creator was a signed-in person).
    /// </summary>
    public static async Task<MailContact> ContactOfAsync(PanelRoundDbContext db, Panel panel)
    {
        if (!string.IsNullOrWhiteSpace(panel.ContactName) || !string.IsNullOrWhiteSpace(panel.ContactEmail))
        {
            return new MailContact(panel.ContactName, panel.ContactEmail);
        }
        if (panel.CreatedBy is not { Length: > 0 } creator || !MailAddresses.IsValid(creator))
        {
            return new MailContact(null, null);
        }
        var normalized = creator.ToUpperInvariant();
        var name = await db.Users.AsNoTracking().Where(u => u.NormalizedEmail == normalized).Select(u => u.DisplayName).FirstOrDefaultAsync();
        return new MailContact(string.IsNullOrWhiteSpace(name) ? null : name, creator);
    }

    /// <summary>The panel's open round, how many rounds have closed, and its contact: what every message to a member says.</summary>
    private async Task<(Round? Open, int Closed, MailContact Contact)> MailFactsAsync(Panel panel)
    {
        var rounds = await db.Rounds.AsNoTracking().Where(r => r.PanelId == panel.Id).ToListAsync();
        return (rounds.FirstOrDefault(r => r.State == RoundState.Open), rounds.Count(r => r.State == RoundState.Closed), await ContactOfAsync(db, panel));
    }

    /// <summary>
    /// Sends a message and audits the send at once, in its own save: <c>mail.sent</c>, or
    /// <c>mail.failed</c> with the error. A mail failure of any kind (an address the mailer cannot
    /// parse, a refusing relay, a full disk, a time-out) never fails the operation, so a new link is
    /// still shown once to the facilitator. Only a cancellation that was asked for (the mailer stops
    /// sending when the host shuts down) is passed on.
    /// </summary>
    private async Task<bool> TrySendAsync(string actor, int panelId, int membershipId, string kind, MailMessageData message)
    {
        string? error = null;
        try
        {
            await mailer.SendAsync(message);
        }
        catch (Exception e) when (e is not OperationCanceledException { CancellationToken.IsCancellationRequested: true })
        {
            log.LogWarning(e, "Mail ({Kind}) to membership {MembershipId} failed.", kind, membershipId);
            error = e.Message;
        }
        Log(actor, error is null ? "mail.sent" : "mail.failed", "Membership", membershipId, panelId,
            error is null ? (object)new { kind, message.Subject } : new { kind, message.Subject, error });
        await db.SaveChangesAsync();
        return error is null;
    }
}
