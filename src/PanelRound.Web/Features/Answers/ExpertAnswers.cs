using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using Npgsql;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Answers;

/// <summary>What a saved submission produced; <paramref name="Replayed"/> is true when an idempotency key had already produced it.</summary>
public sealed record SubmissionReceipt(int Round, int Saved, bool Draft, DateTime At, IReadOnlyList<string> Warnings, bool Replayed = false);

/// <summary>
/// The expert's side: the form behind a personal link, and submissions (drafts, submits,
/// revisions; each a new row, the latest counting), refused with field-level errors or, for a
/// closed round, a conflict.
/// </summary>
public sealed class ExpertAnswers(PanelRoundDbContext db, TimeProvider clock, PanelDefinitions definitions)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    /// <summary>The form behind a personal link, for the membership the request's credential resolved (not read again).</summary>
    /// <remarks>
    /// Implementation note: three reads, whatever the panel's size: the panel's version and state with
    /// its rounds and the catalog's newest observation id; the expert's own answers; and, once the
    /// panel concluded, its consensus. The definition, frozen feedback and reference series come
    /// from <see cref="PanelDefinitions"/> (read once per version).
    /// </remarks>
    public async Task<ExpertForm> GetFormAsync(PanelMembership m)
    {
        var state = await db.Panels.AsNoTracking().Where(p => p.Id == m.PanelId)
            .Select(p => new { p.Version, p.State, p.ConcludedAt, Rounds = p.Rounds.ToList(), Catalog = db.Observations.Max(o => (int?)o.Id) })
            .SingleAsync();
        var definition = await definitions.GetAsync(db, m.PanelId, state.Version);
        var panel = definition.Panel;
        var rounds = state.Rounds;
        var (round, canAnswer, reason) = Status(state.State, state.ConcludedAt, rounds);
        // The feedback shown is the previous round's: round k-1 while round k is open, else the last closed round's.
        var feedbackRound = round is { State: RoundState.Open }
            ? rounds.FirstOrDefault(r => r.Number == round.Number - 1 && r.State == RoundState.Closed)
            : rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        var frozen = feedbackRound is null ? [] : await definitions.FrozenAsync(db, feedbackRound.Id, feedbackRound.Version, feedbackRound.State == RoundState.Closed);
        var own = await db.Estimates.AsNoTracking().Where(e => e.MembershipId == m.Id).ToListAsync();
        var currentRows = round is null ? [] : own.Where(e => e.RoundId == round.Id).ToList();
        var previousRound = round is null ? null : rounds.FirstOrDefault(r => r.Number == round.Number - 1);
        var previousRows = previousRound is null ? [] : own.Where(e => e.RoundId == previousRound.Id && !e.IsDraft).ToList();

        var references = await definitions.ReferencesAsync(db, definition, state.Catalog);
        var questions = new List<ExpertQuestion>();
        foreach (var q in panel.Questions.OrderBy(q => q.Order))
        {
            var reference = references[q.IndicatorId].ToList();
            if (q.IsCalibration && Period.TryParse(q.TargetPeriods, out var asked))
            {
                // A calibration question's own figure (and anything later) never reaches the expert, even once it is in the catalog.
                reference = [.. reference.Where(r => Period.TryParse(r.Period, out var p) && p < asked)];
            }
            var periods = new List<ExpertPeriod>();
            IReadOnlyList<string> rationales = [];
            foreach (var period in q.TargetPeriods.Split(','))
            {
                var current = currentRows.Where(e => e.QuestionId == q.Id && e.Period == period).MaxBy(e => e.Id);
                var previous = previousRows.Where(e => e.QuestionId == q.Id && e.Period == period).MaxBy(e => e.Id);
                var fb = frozen.FirstOrDefault(f => f.QuestionId == q.Id && f.Period == period);
                if (fb is not null && rationales.Count == 0 && !fb.Withheld)
                {
                    rationales = JsonSerializer.Deserialize<List<string>>(fb.RationalesJson) ?? [];
                }
                periods.Add(new ExpertPeriod(period, Values(current), current?.IsDraft ?? false, Values(previous), fb is null ? null : GroupFeedback.From(FeedbackView.FromJson(fb.StatisticsJson))));
            }
            var latest = currentRows.Where(e => e.QuestionId == q.Id).MaxBy(e => e.Id) ?? previousRows.Where(e => e.QuestionId == q.Id).MaxBy(e => e.Id);
            questions.Add(new ExpertQuestion(q.Id, q.Label, q.HelpText, q.Format, q.Indicator!.UnitLabel, q.Indicator.Decimals,
                q.HardMin, q.HardMax, q.PlausibleMin, q.PlausibleMax, reference, periods, rationales, latest?.Confidence, latest?.Rationale));
        }
        var lastSubmit = currentRows.Where(e => !e.IsDraft).Select(e => (DateTime?)e.CreatedAt).Max();
        var contact = string.IsNullOrWhiteSpace(panel.ContactName) && string.IsNullOrWhiteSpace(panel.ContactEmail)
            ? null
            : new PanelContact(NullIfBlank(panel.ContactName), NullIfBlank(panel.ContactEmail));
        var (consensusRound, consensus) = state.State == PanelState.Concluded ? await ConsensusAsync(panel, rounds, own) : (null, []);
        return new ExpertForm(panel.Id, m.Id, m.PanelCode, panel.Title, definition.BriefHtml, state.State,
            round is null ? null : new RoundInfo(round.Number, round.OpensAt, round.ClosesAt, canAnswer),
            canAnswer, reason, feedbackRound?.Number, panel.Settings.OutliersMustJustify, lastSubmit, questions,
            Now, contact, consensusRound, consensus);
    }

    /// <summary>
    /// A concluded panel's published consensus, per question-period in the questions' order, beside
    /// the expert's own answer counted in the final round (the latest submitted, not a draft). A
    /// period with fewer answers than the panel's minimum group size shows no number; its band only
    /// from as many answers as the group's spread needs (a band of few answers gives them away).
    /// </summary>
    private async Task<(int? Round, IReadOnlyList<ExpertConsensus> Entries)> ConsensusAsync(Panel panel, List<Round> rounds, List<Estimate> own)
    {
        var finalRound = rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        var published = await db.Consensus.AsNoTracking().Where(c => c.PanelId == panel.Id).ToListAsync();
        var finalOwn = finalRound is null ? [] : own.Where(e => e.RoundId == finalRound.Id && !e.IsDraft).ToList();
        var entries = new List<ExpertConsensus>();
        foreach (var q in panel.Questions.OrderBy(q => q.Order))
        {
            foreach (var period in q.TargetPeriods.Split(','))
            {
                // A consensus published again (another weighting) replaces the earlier one: the latest row counts.
                if (published.Where(c => c.QuestionId == q.Id && c.Period == period).MaxBy(c => c.Id) is not { } c)
                {
                    continue;
                }
                var mine = Values(finalOwn.Where(e => e.QuestionId == q.Id && e.Period == period).MaxBy(e => e.Id));
                var minimum = Math.Max(3, panel.Settings.MinimumGroupSize);
                var withheld = c.N < minimum;
                var bandWithheld = withheld || c.N < Core.Statistics.AnonymousFeedback.MinimumForSpread;
                entries.Add(new ExpertConsensus(q.Id, period, c.N, minimum, withheld, withheld ? null : c.Value,
                    bandWithheld, bandWithheld ? null : c.Low, bandWithheld ? null : c.High, mine));
            }
        }
        return (finalRound?.Number, entries);
    }

    private static string? NullIfBlank(string? text) => string.IsNullOrWhiteSpace(text) ? null : text.Trim();

    private (Round? Round, bool CanAnswer, string? Reason) Status(PanelState state, DateTime? concludedAt, IReadOnlyCollection<Round> rounds)
    {
        var open = rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (state == PanelState.Concluded)
        {
            return (rounds.MaxBy(r => r.Number), false, $"The panel concluded on {concludedAt:yyyy-MM-dd}; its consensus is published and answers are read-only.");
        }
        if (open is null)
        {
            var last = rounds.MaxBy(r => r.Number);
            return last is null
                ? (null, false, "No round has opened yet.")
                : (last, false, $"Round {last.Number} closed on {last.ClosedAt:yyyy-MM-dd HH:mm} UTC; answers can no longer be changed. The next round has not opened yet.");
        }
        if (Now >= open.ClosesAt)
        {
            return (open, false, $"Round {open.Number} reached its deadline ({open.ClosesAt:yyyy-MM-dd HH:mm} UTC); answers can no longer be changed.");
        }
        return (open, true, null);
    }

    /// <summary>How fine a membership's last-seen time is kept by submissions (a write per submission would cost more than it tells).</summary>
    private static readonly TimeSpan LastSeenGrain = TimeSpan.FromMinutes(1);

    /// <summary>The open round a submission may enter, with its panel's version and the previous round's id and version.</summary>
    private sealed record OpenRound(int Id, int Number, Guid PanelVersion, int? PreviousId, Guid? PreviousVersion);

    /// <summary>
    /// Locks the panel's open round (on the condition that it is open and before its deadline) and
    /// the expert's membership (on the condition that the link still works) for the rest of the
    /// transaction; null when either condition fails. PostgreSQL: one statement; the round row
    /// shared, so submissions run side by side and only the close waits; the membership row
    /// exclusively, so one expert's own submissions take their turns (their times follow their ids)
    /// and a revocation waits for the submission in flight. SQLite: the write lock, taken by a
    /// no-op update, then the rows read.
    /// </summary>
    private async Task<OpenRound?> LockAsync(PanelMembership m, DateTime deadlineCheck)
    {
        if (db.Database.IsNpgsql())
        {
            const string sql = """
                SELECT r."Id", r."Number", p."Version" AS "PanelVersion", pr."Id" AS "PreviousId", pr."Version" AS "PreviousVersion"
                FROM "Rounds" r
                JOIN "Panels" p ON p."Id" = r."PanelId"
                JOIN "Memberships" m ON m."PanelId" = r."PanelId" AND m."Id" = @membership AND m."State" <> @revoked AND m."TokenHash" = @stamp
                LEFT JOIN "Rounds" pr ON pr."PanelId" = r."PanelId" AND pr."Number" = r."Number" - 1
                WHERE r."PanelId" = @panel AND r."State" = @open AND r."ClosesAt" > @deadline
                FOR SHARE OF r FOR NO KEY UPDATE OF m
                """;
            return (await db.Database.SqlQueryRaw<OpenRound>(sql,
                    new NpgsqlParameter<int>("membership", m.Id), new NpgsqlParameter<int>("revoked", (int)MembershipState.Revoked),
                    new NpgsqlParameter<string>("stamp", m.TokenHash), new NpgsqlParameter<int>("panel", m.PanelId),
                    new NpgsqlParameter<int>("open", (int)RoundState.Open), new NpgsqlParameter<DateTime>("deadline", deadlineCheck))
                .ToListAsync()).SingleOrDefault();
        }
        var locked = await db.Rounds.Where(r => r.PanelId == m.PanelId && r.State == RoundState.Open && r.ClosesAt > deadlineCheck)
            .ExecuteUpdateAsync(u => u.SetProperty(r => r.Version, r => r.Version));
        if (locked == 0 || !await LinkStillWorksAsync(m))
        {
            return null;
        }
        return await db.Rounds.AsNoTracking().Where(r => r.PanelId == m.PanelId && r.State == RoundState.Open)
            .Select(r => new OpenRound(r.Id, r.Number, r.Panel!.Version,
                db.Rounds.Where(x => x.PanelId == r.PanelId && x.Number == r.Number - 1).Select(x => (int?)x.Id).FirstOrDefault(),
                db.Rounds.Where(x => x.PanelId == r.PanelId && x.Number == r.Number - 1).Select(x => (Guid?)x.Version).FirstOrDefault()))
            .SingleAsync();
    }

    /// <summary>Whether the membership's link still opens it: not revoked, and not re-issued since the request's credential was read.</summary>
    private Task<bool> LinkStillWorksAsync(PanelMembership m) =>
        db.Memberships.AnyAsync(x => x.Id == m.Id && x.State != MembershipState.Revoked && x.TokenHash == m.TokenHash);

    /// <summary>Why a submission found no round to enter: the round (409, said first) or the link (404), read as they are now.</summary>
    private async Task<Result<SubmissionReceipt>> RefusedAsync(PanelMembership m)
    {
        var panel = await db.Panels.AsNoTracking().Include(p => p.Rounds).SingleAsync(p => p.Id == m.PanelId);
        var (round, canAnswer, reason) = Status(panel.State, panel.ConcludedAt, panel.Rounds);
        if (canAnswer && !await LinkStillWorksAsync(m))
        {
            return Result<SubmissionReceipt>.NotFound("This personal link is unknown or has been revoked.");
        }
        return Result<SubmissionReceipt>.Conflict(reason ?? (round is null ? "No round is open." : $"Round {round.Number} closed; answers can no longer be changed."));
    }

    private static AnswerValues? Values(Estimate? e) => e is null ? null : new AnswerValues(e.Value, e.P10, e.P50, e.P90);

    /// <summary>Saves a draft or a submission for the membership's open round, all-or-nothing.</summary>
    /// <remarks>
    /// Implementation note: the save first locks the round row on the condition that it is still
    /// open, and the membership row on the condition that the link still works, in the same
    /// transaction as the new rows (<see cref="LockAsync"/>). On PostgreSQL the round's lock is
    /// shared (<c>FOR SHARE</c>): submissions to one round run side by side, while the close, which
    /// updates the row (<see cref="RoundLifecycle.CloseRoundAsync"/>), waits for those in flight, and
    /// those that come after it find the round closed. SQLite has one writer, so there the save
    /// takes the row with a no-op update. Either way a submission lands before the close reads the
    /// answers or is refused with a conflict: never acknowledged and then missed. What does not
    /// change while the panel runs (its questions and settings, the previous round's feedback)
    /// comes from <see cref="PanelDefinitions"/>: a submission makes four database calls, the
    /// link's lookup, the lock, the insert and the commit (a fifth, the last-seen time, at most
    /// once a minute per expert).
    /// </remarks>
    /// <param name="m">The expert's membership, as the request's credential resolved it (not read again).</param>
    /// <param name="input">The answers.</param>
    /// <param name="idempotencyKey">
    /// An optional key chosen by the client: a second call with the same key and the same answers
    /// returns the first call's receipt and adds nothing; the same key with different answers is refused.
    /// </param>
    public async Task<Result<SubmissionReceipt>> SubmitAsync(PanelMembership m, SubmissionInput input, string? idempotencyKey = null)
    {
        db.ChangeTracker.Clear();
        if (m.State == MembershipState.Revoked)
        {
            return Result<SubmissionReceipt>.NotFound("This personal link is unknown or has been revoked.");
        }
        SubmissionKeys.Fingerprints? key = idempotencyKey is null ? null : SubmissionKeys.Fingerprint(idempotencyKey, input);
        if (key is not null && await SubmissionKeys.ReplayAsync(db, m.Id, key.Value) is { } replay)
        {
            return replay;
        }
        await using var tx = await db.Database.BeginTransactionAsync();
        var deadlineCheck = Now;
        // The link's first use makes the membership Active; after that its last-seen time is kept to the minute.
        var touch = m.State == MembershipState.Invited || m.LastSeenAt is not { } seen || deadlineCheck - seen >= LastSeenGrain;
        if (await LockAsync(m, deadlineCheck) is not { } round)
        {
            return await RefusedAsync(m);
        }
        var panel = (await definitions.GetAsync(db, m.PanelId, round.PanelVersion)).Panel;
        var previousFeedback = round.PreviousId is not { } previousId || !panel.Settings.OutliersMustJustify
            ? []
            : (await definitions.FrozenAsync(db, previousId, round.PreviousVersion!.Value, closed: true)).Where(f => !f.Withheld)
                .ToDictionary(f => (f.QuestionId, f.Period), f => FeedbackView.FromJson(f.StatisticsJson).Shown?.Spread);
        var check = SubmissionValidator.Validate(panel.Questions, input, previousFeedback);
        if (check.Errors.Any)
        {
            return Result<SubmissionReceipt>.Invalid(check.Errors);
        }
        if (touch)
        {
            await db.Memberships.Where(x => x.Id == m.Id)
                .ExecuteUpdateAsync(u => u.SetProperty(x => x.LastSeenAt, deadlineCheck)
                    .SetProperty(x => x.State, x => x.State == MembershipState.Invited ? MembershipState.Active : x.State));
        }
        // Implementation note: the stored time is read only now, while this transaction holds the
        // round row and the membership row, so the expert's revisions get their times in the same
        // order as their ids: the revision that counts (the highest id) is the latest in time.
        // Whole microseconds: what PostgreSQL keeps, so a replayed receipt shows the same time as the first.
        var clockNow = Now;
        var now = clockNow.AddTicks(-(clockNow.Ticks % TimeSpan.TicksPerMicrosecond));
        var rows = check.Answers.Select(a => new Estimate
        {
            RoundId = round.Id, MembershipId = m.Id, QuestionId = a.QuestionId, Period = a.Period, Value = a.Value, P10 = a.P10, P50 = a.P50, P90 = a.P90,
            Confidence = a.Confidence, Rationale = a.Rationale, IsDraft = input.Draft, CreatedAt = now,
        }).ToList();
        db.Estimates.AddRange(rows);
        var receipt = new SubmissionReceipt(round.Number, rows.Count, input.Draft, now, check.Warnings);
        if (key is not null)
        {
            db.SubmissionKeys.Add(SubmissionKeys.Record(m.Id, key.Value, receipt));
        }
        try
        {
            await db.SaveChangesAsync();
            await tx.CommitAsync();
        }
        catch (DbUpdateException) when (key is not null)
        {
            // The same key raced this call and committed first (the unique index refused the
            // second row): nothing of this call is kept, and the first call's receipt is the answer.
            await tx.RollbackAsync();
            db.ChangeTracker.Clear();
            if (await SubmissionKeys.ReplayAsync(db, m.Id, key.Value) is { } first)
            {
                return first;
            }
            throw;
        }
        return Result<SubmissionReceipt>.Ok(receipt);
    }
}
