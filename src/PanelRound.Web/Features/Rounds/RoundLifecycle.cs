using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Rounds;

/// <summary>
/// A panel's rounds: opening the next round with a deadline (the first opening ends the draft),
/// and closing a round, its feedback frozen in the same transaction. Every change is audited in
/// the same save.
/// </summary>
public sealed class RoundLifecycle(PanelRoundDbContext db, TimeProvider clock)
{
    /// <summary>Why a round cannot open on a panel without an expert whose link works.</summary>
    public const string NoExpertMessage = "Add at least one expert before opening a round: nobody could answer it.";

    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private void Log(string actor, string action, string entityType, object entityId, int? panelId, object? details = null) =>
        Audit.Record(db, actor, action, entityType, entityId, panelId, details, Now);

    /// <summary>
    /// Opens the next round with a deadline; the first opening ends the draft. A panel without a question, or
    /// without an expert whose link works (not revoked), is refused: nobody could answer the round.
    /// </summary>
    public async Task<Result<Round>> OpenRoundAsync(int panelId, DateTime? closesAt, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).Include(p => p.Questions).Include(p => p.Memberships).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<Round>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Result<Round>.Conflict("The panel has concluded.");
        }
        if (panel.Rounds.Any(r => r.State == RoundState.Open))
        {
            return Result<Round>.Conflict("A round is open already; close it first.");
        }
        if (!panel.Memberships.Any(m => m.State != MembershipState.Revoked))
        {
            return Result<Round>.Conflict(NoExpertMessage);
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
            return Result<Round>.Invalid(errors);
        }
        var number = panel.Rounds.Count == 0 ? 1 : panel.Rounds.Max(r => r.Number) + 1;
        if (number > panel.Settings.RoundCap)
        {
            return Result<Round>.Conflict($"The panel's round cap is {panel.Settings.RoundCap}: conclude it instead of opening round {number}.");
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
            return Result<Round>.Conflict("The panel changed while opening the round (another round may have opened); reload and try again.");
        }
        Log(actor, "round.opened", "Round", round.Id, panelId, new { round.Number, round.ClosesAt });
        await db.SaveChangesAsync();
        return Result<Round>.Ok(round);
    }

    /// <summary>
    /// Closes a round: computes the feedback of every question-period from the latest submitted
    /// answers and freezes it in the same transaction as the state change.
    /// </summary>
    /// <remarks>
    /// Implementation note: the transaction first flips the round to closed with a conditional
    /// update. That takes the round row, which every submission also takes before it saves
    /// (<c>ExpertAnswers.SubmitAsync</c>): answers committed before are all read below, and
    /// later ones find the round closed. A second closer (another instance, the deadline service)
    /// updates no row and gets a conflict.
    /// </remarks>
    public async Task<Result<Round>> CloseRoundAsync(int panelId, int roundNumber, string actor)
    {
        db.ChangeTracker.Clear();
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).Include(p => p.Memberships).FirstOrDefaultAsync(p => p.Id == panelId);
        var round = panel is null ? null : await db.Rounds.AsNoTracking().FirstOrDefaultAsync(r => r.PanelId == panelId && r.Number == roundNumber);
        if (panel is null || round is null)
        {
            return Result<Round>.NotFound($"Round {roundNumber} of panel {panelId} does not exist.");
        }
        var now = Now;
        await using var tx = await db.Database.BeginTransactionAsync();
        var flipped = await db.Rounds.Where(r => r.Id == round.Id && r.State == RoundState.Open)
            .ExecuteUpdateAsync(u => u.SetProperty(r => r.State, RoundState.Closed).SetProperty(r => r.ClosedAt, now)
                .SetProperty(r => r.ClosedBy, actor).SetProperty(r => r.Version, Guid.NewGuid()));
        if (flipped == 0)
        {
            return Result<Round>.Conflict($"Round {roundNumber} is closed already.");
        }
        var answers = await CountedAnswers.LoadAsync(db, round.Id);
        if (OutOfDomain(panel, answers) is { } problem)
        {
            // The transaction is rolled back: the round stays open until the cause is removed.
            return Result<Round>.Conflict($"Round {roundNumber} cannot close: {problem}");
        }
        FeedbackFreezer.Freeze(db, round.Id, panel.Questions, answers, panel.Settings);
        Log(actor, "round.closed", "Round", round.Id, panelId, new { round.Number, answers = answers.Select(a => a.MembershipId).Distinct().Count() });
        await db.SaveChangesAsync();
        await tx.CommitAsync();
        return Result<Round>.Ok(await db.Rounds.AsNoTracking().SingleAsync(r => r.Id == round.Id));
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
}
