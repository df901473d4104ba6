using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Application;

public sealed record PanelSettingsInput(
    string? OutlierRule = null, double? TrimFraction = null, double? ConsensusThreshold = null, double? StabilityThreshold = null,
    int? RoundCap = null, int? MinimumGroupSize = null, bool? ShowRationales = null, bool? OutliersMustJustify = null, string? Weighting = null);

public sealed record PanelInput(string? Title, string? Brief, DateOnly? StartsOn, string? TargetPeriods, PanelSettingsInput? Settings = null);

public sealed record QuestionInput(
    int? IndicatorId, string? Label, string? HelpText, string? Format, double? HardMin, double? HardMax,
    double? PlausibleMin, double? PlausibleMax, string? TargetPeriods = null);

/// <summary>A personal link, shown once when issued: only its hash is stored.</summary>
public sealed record IssuedLink(int MembershipId, string PanelCode, string Token, string Path);

/// <summary>
/// The facilitator's operations on a panel: set-up while it is a draft, the roster and links,
/// opening and closing rounds (closing freezes the round feedback in the same transaction), and
/// concluding with the published consensus. Every state change is audited in the same save.
/// </summary>
public sealed class PanelWorkflow(PanelRoundDbContext db, TimeProvider clock, IMailer mailer, ConsensusPublisher publisher, ILogger<PanelWorkflow> log)
{
    /// <summary>The most target periods a panel may have (40 quarters, ten years).</summary>
    public const int MaxTargetPeriods = 40;

    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private void Log(string actor, string action, string entityType, object entityId, int? panelId, object? details = null) =>
        Audit.Record(db, actor, action, entityType, entityId, panelId, details, Now);

    public async Task<Outcome<Panel>> CreatePanelAsync(PanelInput input, string actor)
    {
        var panel = new Panel { CreatedAt = Now, CreatedBy = actor, State = PanelState.Draft, Version = Guid.NewGuid() };
        var errors = Apply(panel, input);
        if (errors.Any)
        {
            return Outcome<Panel>.Invalid(errors);
        }
        db.Panels.Add(panel);
        await db.SaveChangesAsync();
        Log(actor, "panel.created", "Panel", panel.Id, panel.Id, new { panel.Title, panel.TargetPeriods });
        await db.SaveChangesAsync();
        return Outcome<Panel>.Ok(panel);
    }

    public async Task<Outcome<Panel>> UpdatePanelAsync(int panelId, PanelInput input, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Outcome<Panel>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Outcome<Panel>.Conflict("The panel can be edited only while it is a draft (before round 1 opens).");
        }
        var errors = Apply(panel, input);
        var periods = panel.TargetPeriods.Split(',');
        foreach (var q in panel.Questions.Where(q => q.TargetPeriods.Split(',').Any(p => !periods.Contains(p))))
        {
            errors.Add("targetPeriods", $"Question \"{q.Label}\" asks about {q.TargetPeriods.Replace(",", ", ", StringComparison.Ordinal)}: edit it or keep those periods.");
        }
        if (errors.Any)
        {
            db.ChangeTracker.Clear();
            return Outcome<Panel>.Invalid(errors);
        }
        panel.Version = Guid.NewGuid();
        Log(actor, "panel.edited", "Panel", panel.Id, panel.Id, new { panel.Title, panel.TargetPeriods, panel.Settings });
        await db.SaveChangesAsync();
        return Outcome<Panel>.Ok(panel);
    }

    private static FieldErrors Apply(Panel panel, PanelInput input)
    {
        var errors = new FieldErrors();
        panel.Title = errors.Required("title", input.Title, FieldLengths.Title, "Title");
        panel.Brief = errors.Optional("brief", input.Brief, FieldLengths.Brief, "Brief") ?? "";
        if (input.StartsOn is not { } starts)
        {
            errors.Add("startsOn", "The start date is required: the reference series is what was observed before it.");
        }
        else
        {
            panel.StartsOn = starts;
        }
        if (!Period.TryParseList(input.TargetPeriods, out var periods, out var periodError))
        {
            errors.Add("targetPeriods", periodError!);
        }
        else if (periods.Count > MaxTargetPeriods)
        {
            errors.Add("targetPeriods", $"At most {MaxTargetPeriods} target periods.");
        }
        else
        {
            if (input.StartsOn is { } s && periods.Any(p => p.EndDate < s))
            {
                errors.Add("targetPeriods", "Every target period must end after the panel's start.");
            }
            panel.TargetPeriods = string.Join(",", periods);
        }
        var x = input.Settings ?? new PanelSettingsInput();
        var settings = panel.Settings;
        if (x.OutlierRule is { } rule)
        {
            if (Enum.TryParse<OutlierRuleSetting>(rule, ignoreCase: true, out var r) && Enum.IsDefined(r))
            {
                settings.OutlierRule = r;
            }
            else
            {
                errors.Add("settings.outlierRule", "Outlier rule is SymmetricTrim, TukeyFences or ModifiedZScore.");
            }
        }
        if (x.Weighting is { } w)
        {
            if (Enum.TryParse<ConsensusWeighting>(w, ignoreCase: true, out var cw) && Enum.IsDefined(cw))
            {
                settings.Weighting = cw;
            }
            else
            {
                errors.Add("settings.weighting", "Weighting is Equal or TrackRecord.");
            }
        }
        settings.TrimFraction = Bounded(errors, "settings.trimFraction", x.TrimFraction, settings.TrimFraction, 0, 0.45, "Trim fraction");
        settings.ConsensusThreshold = Bounded(errors, "settings.consensusThreshold", x.ConsensusThreshold, settings.ConsensusThreshold, 0.001, 1, "Consensus threshold");
        settings.StabilityThreshold = Bounded(errors, "settings.stabilityThreshold", x.StabilityThreshold, settings.StabilityThreshold, 0.001, 1, "Stability threshold");
        if (x.RoundCap is { } cap)
        {
            if (cap is < 1 or > 10)
            {
                errors.Add("settings.roundCap", "Round cap is 1 to 10.");
            }
            else
            {
                settings.RoundCap = cap;
            }
        }
        if (x.MinimumGroupSize is { } min)
        {
            if (min is < 3 or > 50)
            {
                errors.Add("settings.minimumGroupSize", "Minimum group size is 3 to 50: fewer answers than 3 are never shown.");
            }
            else
            {
                settings.MinimumGroupSize = min;
            }
        }
        settings.ShowRationales = x.ShowRationales ?? settings.ShowRationales;
        settings.OutliersMustJustify = x.OutliersMustJustify ?? settings.OutliersMustJustify;
        return errors;
    }

    private static double Bounded(FieldErrors errors, string field, double? value, double current, double min, double max, string label)
    {
        if (value is not { } v)
        {
            return current;
        }
        if (!double.IsFinite(v) || v < min || v > max)
        {
            errors.Add(field, FormattableString.Invariant($"{label} is between {min} and {max} (a share: 0.10 = 10%)."));
            return current;
        }
        return v;
    }

    public async Task<Outcome<Question>> AddQuestionAsync(int panelId, QuestionInput input, string actor) =>
        await SaveQuestionAsync(panelId, null, input, actor);

    public async Task<Outcome<Question>> UpdateQuestionAsync(int panelId, int questionId, QuestionInput input, string actor) =>
        await SaveQuestionAsync(panelId, questionId, input, actor);

    private async Task<Outcome<Question>> SaveQuestionAsync(int panelId, int? questionId, QuestionInput input, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Outcome<Question>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Outcome<Question>.Conflict("Questions can be changed only while the panel is a draft.");
        }
        var question = questionId is { } qid ? panel.Questions.FirstOrDefault(q => q.Id == qid) : new Question { Order = panel.Questions.Count + 1 };
        if (question is null)
        {
            return Outcome<Question>.NotFound($"Question {questionId} is not on panel {panelId}.");
        }
        var errors = new FieldErrors();
        question.Label = errors.Required("label", input.Label, FieldLengths.Title, "Label");
        question.HelpText = errors.Optional("helpText", input.HelpText, FieldLengths.Description, "Help text");
        if (input.IndicatorId is not { } indicatorId || !await db.Indicators.AnyAsync(i => i.Id == indicatorId))
        {
            errors.Add("indicatorId", "Choose an existing indicator.");
        }
        else
        {
            question.IndicatorId = indicatorId;
        }
        if (!Enum.TryParse<ResponseFormat>(input.Format ?? "Point", ignoreCase: true, out var format) || !Enum.IsDefined(format))
        {
            errors.Add("format", "Response format is Point or Range.");
        }
        question.Format = format;
        foreach (var (field, v) in new[] { ("hardMin", input.HardMin), ("hardMax", input.HardMax), ("plausibleMin", input.PlausibleMin), ("plausibleMax", input.PlausibleMax) })
        {
            errors.Finite(field, v, "Bound");
        }
        if (input.HardMin is { } hmin && input.HardMax is { } hmax && hmin >= hmax)
        {
            errors.Add("hardMax", "The hard maximum must be above the hard minimum.");
        }
        if (input.PlausibleMin is { } pmin && input.PlausibleMax is { } pmax && pmin >= pmax)
        {
            errors.Add("plausibleMax", "The plausible maximum must be above the plausible minimum.");
        }
        if (input.PlausibleMin < input.HardMin || input.PlausibleMax > input.HardMax)
        {
            errors.Add("plausibleMin", "The plausible range must lie within the hard bounds.");
        }
        (question.HardMin, question.HardMax, question.PlausibleMin, question.PlausibleMax) = (input.HardMin, input.HardMax, input.PlausibleMin, input.PlausibleMax);
        var panelPeriods = Period.TryParseList(panel.TargetPeriods, out var pp, out _) ? pp : [];
        if (string.IsNullOrWhiteSpace(input.TargetPeriods))
        {
            question.TargetPeriods = panel.TargetPeriods;
        }
        else if (!Period.TryParseList(input.TargetPeriods, out var qp, out var err))
        {
            errors.Add("targetPeriods", err!);
        }
        else if (qp.Any(p => !panelPeriods.Contains(p)))
        {
            errors.Add("targetPeriods", $"A question's target periods are some of the panel's ({panel.TargetPeriods}).");
        }
        else
        {
            question.TargetPeriods = string.Join(",", qp);
        }
        if (errors.Any)
        {
            db.ChangeTracker.Clear();
            return Outcome<Question>.Invalid(errors);
        }
        if (questionId is null)
        {
            panel.Questions.Add(question);
        }
        // The panel's version guards against a round opening while its questions change.
        panel.Version = Guid.NewGuid();
        try
        {
            await db.SaveChangesAsync();
        }
        catch (DbUpdateConcurrencyException)
        {
            return Outcome<Question>.Conflict("The panel changed meanwhile (a round may have opened); reload and try again.");
        }
        Log(actor, questionId is null ? "question.added" : "question.edited", "Question", question.Id, panelId, new { question.Label, question.Format, question.TargetPeriods });
        await db.SaveChangesAsync();
        return Outcome<Question>.Ok(question);
    }

    public async Task<Outcome<bool>> RemoveQuestionAsync(int panelId, int questionId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        var question = panel?.Questions.FirstOrDefault(q => q.Id == questionId);
        if (panel is null || question is null)
        {
            return Outcome<bool>.NotFound($"Question {questionId} is not on panel {panelId}.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Outcome<bool>.Conflict("Questions can be removed only while the panel is a draft.");
        }
        db.Questions.Remove(question);
        Log(actor, "question.removed", "Question", questionId, panelId, new { question.Label });
        await db.SaveChangesAsync();
        return Outcome<bool>.Ok(true);
    }

    /// <summary>
    /// Adds an expert of the roster to the panel with a random panel code and a new personal link. The
    /// link is returned (to be shown once) whether or not the invitation could be sent.
    /// </summary>
    public async Task<Outcome<IssuedLink>> AddMemberAsync(int panelId, int expertId, string actor, string baseUrl, bool sendInvitation = true)
    {
        var panel = await db.Panels.FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Outcome<IssuedLink>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Outcome<IssuedLink>.Conflict("The panel has concluded; no experts can be added.");
        }
        var expert = await db.Experts.FirstOrDefaultAsync(e => e.Id == expertId);
        if (expert is null)
        {
            var errors = new FieldErrors();
            errors.Add("expertId", "Choose an expert from the roster.");
            return Outcome<IssuedLink>.Invalid(errors);
        }
        if (await db.Memberships.AnyAsync(m => m.PanelId == panelId && m.ExpertId == expertId))
        {
            return Outcome<IssuedLink>.Conflict($"{expert.Name} is on this panel already; re-issue the link instead.");
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
            await TrySendAsync(actor, panelId, membership.Id, "invitation", new MailMessageData(expert.Email, expert.Name, $"Invitation: {panel.Title}",
                $"Dear {expert.Name},\n\nyou are invited to the expert panel \"{panel.Title}\". Your personal link (do not forward it):\n\n{baseUrl.TrimEnd('/')}{link.Path}\n\nYour answers are anonymous to the other experts.\n"));
        }
        return Outcome<IssuedLink>.Ok(link);
    }

    /// <summary>Issues a new token for a membership; the old link stops working at once. The link is returned whether or not its message could be sent.</summary>
    public async Task<Outcome<IssuedLink>> ReissueLinkAsync(int panelId, int membershipId, string actor, string baseUrl, bool sendInvitation = true)
    {
        var m = await db.Memberships.Include(x => x.Expert).Include(x => x.Panel).FirstOrDefaultAsync(x => x.Id == membershipId && x.PanelId == panelId);
        if (m is null)
        {
            return Outcome<IssuedLink>.NotFound($"Membership {membershipId} is not on panel {panelId}.");
        }
        if (m.Panel!.State == PanelState.Concluded)
        {
            return Outcome<IssuedLink>.Conflict("The panel has concluded; its memberships are read-only.");
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
            await TrySendAsync(actor, panelId, m.Id, "new-link", new MailMessageData(m.Expert!.Email, m.Expert.Name, $"Your new link: {m.Panel.Title}",
                $"Dear {m.Expert.Name},\n\nhere is your new personal link to \"{m.Panel.Title}\"; the previous one no longer works:\n\n{baseUrl.TrimEnd('/')}{link.Path}\n"));
        }
        return Outcome<IssuedLink>.Ok(link);
    }

    public async Task<Outcome<bool>> RevokeLinkAsync(int panelId, int membershipId, string actor)
    {
        var m = await db.Memberships.Include(x => x.Panel).FirstOrDefaultAsync(x => x.Id == membershipId && x.PanelId == panelId);
        if (m is null)
        {
            return Outcome<bool>.NotFound($"Membership {membershipId} is not on panel {panelId}.");
        }
        if (m.Panel!.State == PanelState.Concluded)
        {
            return Outcome<bool>.Conflict("The panel has concluded; its memberships are read-only.");
        }
        m.State = MembershipState.Revoked;
        m.RevokedAt = Now;
        // A new random hash, so that neither the old token nor its cookie can ever match again.
        m.TokenHash = Secrets.Hash(Secrets.NewToken());
        Log(actor, "link.revoked", "Membership", m.Id, panelId, new { m.PanelCode });
        await db.SaveChangesAsync();
        return Outcome<bool>.Ok(true);
    }

    /// <summary>
    /// Sends a reminder to each active member who has not submitted in the open round; a failed send
    /// does not stop the others. Every send is audited (<c>mail.sent</c> or <c>mail.failed</c>), and
    /// the batch as <c>reminders.sent</c>.
    /// </summary>
    public async Task<Outcome<MailReport>> SendRemindersAsync(int panelId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).FirstOrDefaultAsync(p => p.Id == panelId);
        var round = panel?.Rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (panel is null)
        {
            return Outcome<MailReport>.NotFound($"Panel {panelId} does not exist.");
        }
        if (round is null)
        {
            return Outcome<MailReport>.Conflict("No round is open.");
        }
        var answered = await RoundResponses.AnsweredAsync(db, round.Id);
        var pending = (await db.Memberships.Include(m => m.Expert)
            .Where(m => m.PanelId == panelId && m.State != MembershipState.Revoked).OrderBy(m => m.Id).ToListAsync())
            .Where(m => !answered.Contains(m.Id)).ToList();
        int sent = 0, failed = 0;
        foreach (var m in pending)
        {
            var ok = await TrySendAsync(actor, panelId, m.Id, "reminder", new MailMessageData(m.Expert!.Email, m.Expert.Name, $"Reminder: round {round.Number} of {panel.Title}",
                $"Dear {m.Expert.Name},\n\nround {round.Number} of \"{panel.Title}\" closes on {round.ClosesAt:yyyy-MM-dd HH:mm} UTC and we have not received your answers yet. Please use the personal link you were sent; ask the facilitator for a new one if you cannot find it.\n"));
            (sent, failed) = ok ? (sent + 1, failed) : (sent, failed + 1);
        }
        Log(actor, "reminders.sent", "Round", round.Id, panelId, new { round.Number, count = sent, failed });
        await db.SaveChangesAsync();
        return Outcome<MailReport>.Ok(new MailReport(sent, failed));
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

    /// <summary>Opens the next round with a deadline; the first opening ends the draft.</summary>
    public async Task<Outcome<Round>> OpenRoundAsync(int panelId, DateTime? closesAt, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).Include(p => p.Questions).Include(p => p.Memberships).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Outcome<Round>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Outcome<Round>.Conflict("The panel has concluded.");
        }
        if (panel.Rounds.Any(r => r.State == RoundState.Open))
        {
            return Outcome<Round>.Conflict("A round is open already; close it first.");
        }
        var errors = new FieldErrors();
        var deadline = closesAt is { } c ? DateTime.SpecifyKind(c.Kind == DateTimeKind.Local ? c.ToUniversalTime() : c, DateTimeKind.Utc) : (DateTime?)null;
        if (deadline is null)
        {
            errors.Add("closesAt", "The deadline is required.");
        }
        else if (deadline <= Now.AddMinutes(5))
        {
            errors.Add("closesAt", "The deadline must be at least five minutes from now.");
        }
        if (panel.Questions.Count == 0)
        {
            errors.Add("panel", "Add at least one question before opening a round.");
        }
        if (errors.Any)
        {
            return Outcome<Round>.Invalid(errors);
        }
        var number = panel.Rounds.Count == 0 ? 1 : panel.Rounds.Max(r => r.Number) + 1;
        if (number > panel.Settings.RoundCap)
        {
            return Outcome<Round>.Conflict($"The panel's round cap is {panel.Settings.RoundCap}: conclude it instead of opening round {number}.");
        }
        var round = new Round { PanelId = panelId, Number = number, State = RoundState.Open, OpensAt = Now, ClosesAt = deadline!.Value, Version = Guid.NewGuid() };
        panel.Rounds.Add(round);
        panel.State = PanelState.Running;
        panel.Version = Guid.NewGuid();
        try
        {
            await db.SaveChangesAsync();
        }
        catch (DbUpdateException)
        {
            // Another request opened a round or changed the panel at the same moment.
            return Outcome<Round>.Conflict("The panel changed while opening the round (another round may have opened); reload and try again.");
        }
        Log(actor, "round.opened", "Round", round.Id, panelId, new { round.Number, round.ClosesAt });
        await db.SaveChangesAsync();
        return Outcome<Round>.Ok(round);
    }

    /// <summary>
    /// Closes a round: computes the feedback of every question-period from the latest submitted
    /// answers and freezes it in the same transaction as the state change.
    /// </summary>
    /// <remarks>
    /// Implementation note: the transaction first flips the round to closed with a conditional
    /// update. That takes the round row, which every submission also takes before it saves
    /// (<see cref="ExpertAnswers.SubmitAsync"/>): answers committed before are all read below, and
    /// later ones find the round closed. A second closer (another instance, the deadline service)
    /// updates no row and gets a conflict.
    /// </remarks>
    public async Task<Outcome<Round>> CloseRoundAsync(int panelId, int roundNumber, string actor)
    {
        db.ChangeTracker.Clear();
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).Include(p => p.Memberships).FirstOrDefaultAsync(p => p.Id == panelId);
        var round = panel is null ? null : await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == panelId && r.Number == roundNumber);
        if (panel is null || round is null)
        {
            return Outcome<Round>.NotFound($"Round {roundNumber} of panel {panelId} does not exist.");
        }
        var now = Now;
        await using var tx = await db.Database.BeginTransactionAsync();
        var flipped = await db.Rounds.Where(r => r.Id == round.Id && r.State == RoundState.Open)
            .ExecuteUpdateAsync(u => u.SetProperty(r => r.State, RoundState.Closed).SetProperty(r => r.ClosedAt, now)
                .SetProperty(r => r.ClosedBy, actor).SetProperty(r => r.Version, Guid.NewGuid()));
        if (flipped == 0)
        {
            return Outcome<Round>.Conflict($"Round {roundNumber} is closed already.");
        }
        var answers = await CountedAnswersAsync(db, round.Id);
        if (OutOfDomain(panel, answers) is { } problem)
        {
            // The transaction is rolled back: the round stays open until the cause is removed.
            return Outcome<Round>.Conflict($"Round {roundNumber} cannot close: {problem}");
        }
        FeedbackFreezer.Freeze(db, round.Id, panel.Questions, answers, panel.Settings);
        Log(actor, "round.closed", "Round", round.Id, panelId, new { round.Number, answers = answers.Select(a => a.MembershipId).Distinct().Count() });
        await db.SaveChangesAsync();
        await tx.CommitAsync();
        return Outcome<Round>.Ok(await db.Rounds.AsNoTracking().SingleAsync(r => r.Id == round.Id));
    }

    /// <summary>
    /// Names the answers that no statistic can take (beyond ±10¹², possible only in rows stored
    /// before every input was limited), by panel code, so that the facilitator can act (revoking a
    /// link removes its answers from an open round); null when every answer can be used.
    /// </summary>
    private static string? OutOfDomain(Panel panel, IReadOnlyList<CountedAnswer> answers)
    {
        var bad = answers.Where(a => new[] { a.Value, a.P10, a.P50, a.P90 }.Any(v => v is { } x && !Core.Domain.Numbers.InBounds(x))).ToList();
        if (bad.Count == 0)
        {
            return null;
        }
        var codes = panel.Memberships.ToDictionary(m => m.Id, m => m.PanelCode);
        var labels = panel.Questions.ToDictionary(q => q.Id, q => q.Label);
        var list = bad.Take(5).Select(a => $"{(codes.TryGetValue(a.MembershipId, out var c) ? c : "an expert")} on \"{labels.GetValueOrDefault(a.QuestionId)}\" {a.Period}");
        return $"{bad.Count} answer(s) lie beyond ±1e12, which no statistic can use ({string.Join("; ", list)}). Revoke or re-issue those links, or ask the experts to revise, then close again.";
    }

    /// <summary>Concludes the panel: publishes the consensus of its last closed round; read-only from then on.</summary>
    public async Task<Outcome<IReadOnlyList<ConsensusEntry>>> ConcludeAsync(int panelId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Outcome<IReadOnlyList<ConsensusEntry>>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Outcome<IReadOnlyList<ConsensusEntry>>.Conflict("The panel has concluded already.");
        }
        if (panel.Rounds.Any(r => r.State == RoundState.Open))
        {
            return Outcome<IReadOnlyList<ConsensusEntry>>.Conflict("Close the open round before concluding.");
        }
        var last = panel.Rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        if (last is null)
        {
            return Outcome<IReadOnlyList<ConsensusEntry>>.Conflict("No round has closed yet: there is nothing to publish.");
        }
        var entries = await publisher.ComputeAsync(panel, last);
        await using var tx = await db.Database.BeginTransactionAsync();
        db.Consensus.AddRange(entries);
        panel.State = PanelState.Concluded;
        panel.ConcludedAt = Now;
        panel.Version = Guid.NewGuid();
        Log(actor, "consensus.published", "Panel", panel.Id, panel.Id,
            new { round = last.Number, entries = entries.Count, weighting = panel.Settings.Weighting.ToString() });
        try
        {
            await db.SaveChangesAsync();
        }
        catch (DbUpdateException)
        {
            return Outcome<IReadOnlyList<ConsensusEntry>>.Conflict("The panel changed while concluding (it may have been concluded already); reload and try again.");
        }
        await tx.CommitAsync();
        return Outcome<IReadOnlyList<ConsensusEntry>>.Ok(entries);
    }

    /// <summary>The latest submitted (not draft) answer of each membership to each question-period of a round.</summary>
    /// <remarks>A revoked membership's answers do not count in rounds that were still open when it was revoked (<see cref="AnswersCount"/>).</remarks>
    public static async Task<IReadOnlyList<CountedAnswer>> CountedAnswersAsync(PanelRoundDbContext db, int roundId)
    {
        var closedAt = await db.Rounds.Where(r => r.Id == roundId).Select(r => r.ClosedAt).SingleAsync();
        var rows = await db.Estimates.AsNoTracking().Where(e => e.RoundId == roundId && !e.IsDraft)
            .Join(db.Memberships, e => e.MembershipId, m => m.Id, (e, m) => new { Estimate = e, m.State, m.RevokedAt })
            .ToListAsync();
        return rows.Where(r => AnswersCount(r.State, r.RevokedAt, closedAt))
            .GroupBy(r => (r.Estimate.MembershipId, r.Estimate.QuestionId, r.Estimate.Period))
            .Select(g => CountedAnswer.From(g.MaxBy(r => r.Estimate.Id)!.Estimate)).ToList();
    }

    /// <summary>
    /// Whether a membership's answers count in a round: the membership is not revoked, or it was
    /// revoked after the round closed (a later revocation does not rewrite a closed round). The one
    /// rule for the round feedback, the consensus and the scorecard.
    /// </summary>
    public static bool AnswersCount(MembershipState state, DateTime? revokedAt, DateTime? roundClosedAt) =>
        state != MembershipState.Revoked || (roundClosedAt is { } closed && revokedAt > closed);
}
