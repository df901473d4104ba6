using System.Globalization;
using System.Text.Json;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Core.Statistics;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Application;

public sealed record PeriodAnswerInput(string? Period, double? Value = null, double? P10 = null, double? P50 = null, double? P90 = null);

public sealed record QuestionAnswerInput(int QuestionId, int? Confidence, string? Rationale, IReadOnlyList<PeriodAnswerInput>? Periods);

public sealed record SubmissionInput(bool Draft, IReadOnlyList<QuestionAnswerInput>? Answers);

public sealed record SubmissionReceipt(int Round, int Saved, bool Draft, DateTime At, IReadOnlyList<string> Warnings);

public sealed record AnswerValues(double? Value, double? P10, double? P50, double? P90);

public sealed record SeriesPoint(string Period, double Value);

public sealed record RoundInfo(int Number, DateTime OpensAt, DateTime ClosesAt, bool IsOpen);

/// <summary>One target period of a question, as the expert sees it.</summary>
public sealed record ExpertPeriod(string Period, AnswerValues? Current, bool CurrentIsDraft, AnswerValues? Previous, GroupFeedback? Feedback);

public sealed record ExpertQuestion(
    int Id, string Label, string? HelpText, ResponseFormat Format, string Unit, int Decimals,
    double? HardMin, double? HardMax, double? PlausibleMin, double? PlausibleMax,
    IReadOnlyList<SeriesPoint> Reference, IReadOnlyList<ExpertPeriod> Periods, IReadOnlyList<string> Rationales,
    int? Confidence, string? Rationale);

/// <summary>What an expert's personal link shows: their own membership only, and anonymous group feedback.</summary>
public sealed record ExpertForm(
    int PanelId, int MembershipId, string PanelCode, string Title, string BriefHtml, PanelState PanelState,
    RoundInfo? Round, bool CanAnswer, string? ReadOnlyReason, int? FeedbackRound, bool OutliersMustJustify,
    DateTime? LastSubmittedAt, IReadOnlyList<ExpertQuestion> Questions);

/// <summary>
/// The expert's side: the form behind a personal link, and submissions (drafts, submits,
/// revisions; each a new row, the latest counting), refused with field-level errors or, for a
/// closed round, a conflict.
/// </summary>
public sealed class ExpertAnswers(PanelRoundDbContext db, TimeProvider clock)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    /// <summary>The membership a token opens, or null for an unknown or revoked token.</summary>
    public static Task<PanelMembership?> ResolveTokenAsync(PanelRoundDbContext db, string? token) =>
        string.IsNullOrWhiteSpace(token)
            ? Task.FromResult<PanelMembership?>(null)
            : db.Memberships.FirstOrDefaultAsync(m => m.TokenHash == Secrets.Hash(token.Trim()) && m.State != MembershipState.Revoked);

    public async Task<ExpertForm> GetFormAsync(int membershipId)
    {
        var m = await db.Memberships.AsNoTracking().SingleAsync(x => x.Id == membershipId);
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds).SingleAsync(p => p.Id == m.PanelId);
        var (round, canAnswer, reason) = Status(panel);
        // The feedback shown is the previous round's: round k-1 while round k is open, else the last closed round's.
        var feedbackRound = round is { State: RoundState.Open }
            ? panel.Rounds.FirstOrDefault(r => r.Number == round.Number - 1 && r.State == RoundState.Closed)
            : panel.Rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        var frozen = feedbackRound is null ? [] : await db.RoundFeedback.AsNoTracking().Where(f => f.RoundId == feedbackRound.Id).ToListAsync();
        var own = await db.Estimates.AsNoTracking().Where(e => e.MembershipId == m.Id).ToListAsync();
        var currentRows = round is null ? [] : own.Where(e => e.RoundId == round.Id).ToList();
        var previousRound = round is null ? null : panel.Rounds.FirstOrDefault(r => r.Number == round.Number - 1);
        var previousRows = previousRound is null ? [] : own.Where(e => e.RoundId == previousRound.Id && !e.IsDraft).ToList();

        var references = await Catalog.ReferenceSeriesAsync(db, panel.Questions.Select(q => q.IndicatorId).Distinct().ToList(), panel.StartsOn);
        var questions = new List<ExpertQuestion>();
        foreach (var q in panel.Questions.OrderBy(q => q.Order))
        {
            var reference = references[q.IndicatorId].ToList();
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
        return new ExpertForm(panel.Id, m.Id, m.PanelCode, panel.Title, Markdown.ToSafeHtml(panel.Brief), panel.State,
            round is null ? null : new RoundInfo(round.Number, round.OpensAt, round.ClosesAt, canAnswer),
            canAnswer, reason, feedbackRound?.Number, panel.Settings.OutliersMustJustify, lastSubmit, questions);
    }

    private (Round? Round, bool CanAnswer, string? Reason) Status(Panel panel)
    {
        var open = panel.Rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (panel.State == PanelState.Concluded)
        {
            return (panel.Rounds.MaxBy(r => r.Number), false, $"The panel concluded on {panel.ConcludedAt:yyyy-MM-dd}; its consensus is published and answers are read-only.");
        }
        if (open is null)
        {
            var last = panel.Rounds.MaxBy(r => r.Number);
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

    private static AnswerValues? Values(Estimate? e) => e is null ? null : new AnswerValues(e.Value, e.P10, e.P50, e.P90);

    /// <summary>Saves a draft or a submission for the membership's open round, all-or-nothing.</summary>
    /// <remarks>
    /// Implementation note: the save first updates the round row on the condition that it is
    /// still open, in the same transaction as the new rows. Closing a round takes the same row
    /// first (<see cref="PanelWorkflow.CloseRoundAsync"/>), so a submission either lands before the
    /// close reads the answers or is refused with a conflict: never acknowledged and then missed.
    /// Submissions only queue behind each other on that row; they do not fail.
    /// </remarks>
    public async Task<Outcome<SubmissionReceipt>> SubmitAsync(int membershipId, SubmissionInput input)
    {
        db.ChangeTracker.Clear();
        var m = await db.Memberships.SingleAsync(x => x.Id == membershipId);
        if (m.State == MembershipState.Revoked)
        {
            return Outcome<SubmissionReceipt>.NotFound("This personal link is unknown or has been revoked.");
        }
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds).SingleAsync(p => p.Id == m.PanelId);
        var (_, canAnswer, reason) = Status(panel);
        var round = panel.Rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (!canAnswer || round is null)
        {
            return Outcome<SubmissionReceipt>.Conflict(reason ?? "No round is open.");
        }
        var previous = panel.Rounds.FirstOrDefault(r => r.Number == round.Number - 1);
        var previousFeedback = previous is null || !panel.Settings.OutliersMustJustify
            ? []
            : (await db.RoundFeedback.AsNoTracking().Where(f => f.RoundId == previous.Id && !f.Withheld)
                    .Select(f => new { f.QuestionId, f.Period, f.StatisticsJson }).ToListAsync())
                .ToDictionary(f => (f.QuestionId, f.Period), f => FeedbackView.FromJson(f.StatisticsJson).Shown?.Spread);
        var (errors, warnings, rows) = Validate(panel, input, previousFeedback);
        if (errors.Any)
        {
            return Outcome<SubmissionReceipt>.Invalid(errors);
        }
        await using var tx = await db.Database.BeginTransactionAsync();
        var deadlineCheck = Now;
        var stillOpen = await db.Rounds.Where(r => r.Id == round.Id && r.State == RoundState.Open && r.ClosesAt > deadlineCheck)
            .ExecuteUpdateAsync(u => u.SetProperty(r => r.Version, r => r.Version));
        var stillMember = await db.Memberships.Where(x => x.Id == m.Id && x.State != MembershipState.Revoked && x.TokenHash == m.TokenHash)
            .ExecuteUpdateAsync(u => u.SetProperty(x => x.LastSeenAt, deadlineCheck)
                .SetProperty(x => x.State, x => x.State == MembershipState.Invited ? MembershipState.Active : x.State));
        // Implementation note: the stored time is read only now, while this transaction holds the
        // round row and the membership row, so the expert's revisions get their times in the same
        // order as their ids: the revision that counts (the highest id) is the latest in time.
        var now = Now;
        if (stillOpen == 0)
        {
            return Outcome<SubmissionReceipt>.Conflict($"Round {round.Number} closed; answers can no longer be changed.");
        }
        if (stillMember == 0)
        {
            return Outcome<SubmissionReceipt>.NotFound("This personal link is unknown or has been revoked.");
        }
        foreach (var row in rows)
        {
            row.RoundId = round.Id;
            row.MembershipId = m.Id;
            row.CreatedAt = now;
        }
        db.Estimates.AddRange(rows);
        await db.SaveChangesAsync();
        await tx.CommitAsync();
        return Outcome<SubmissionReceipt>.Ok(new SubmissionReceipt(round.Number, rows.Count, input.Draft, now, warnings));
    }

    private static (FieldErrors Errors, List<string> Warnings, List<Estimate> Rows) Validate(
        Panel panel, SubmissionInput input, IReadOnlyDictionary<(int, string), AnonymousSpread?> previousFeedback)
    {
        var errors = new FieldErrors();
        var warnings = new List<string>();
        var rows = new List<Estimate>();
        var answers = input.Answers ?? [];
        var questions = panel.Questions.ToDictionary(q => q.Id);
        var seenQuestions = new HashSet<int>();
        if (answers.Count > questions.Count)
        {
            errors.Add("answers", $"At most {questions.Count} answers: one per question.");
            return (errors, warnings, rows);
        }
        for (var i = 0; i < answers.Count; i++)
        {
            var a = answers[i];
            var at = $"answers[{i}]";
            if (a is null)
            {
                errors.Add(at, "An answer is missing.");
                continue;
            }
            if (!questions.TryGetValue(a.QuestionId, out var q))
            {
                errors.Add($"{at}.questionId", $"Question {a.QuestionId} is not on this panel.");
                continue;
            }
            if (!seenQuestions.Add(q.Id))
            {
                errors.Add($"{at}.questionId", $"Question {q.Id} is answered twice.");
                continue;
            }
            if (a.Confidence is { } c && (c < 1 || c > 5))
            {
                errors.Add($"{at}.confidence", "Confidence is 1 (low) to 5 (high).");
            }
            var rationale = errors.Optional($"{at}.rationale", a.Rationale, FieldLengths.Rationale, "Rationale");
            var targetPeriods = q.TargetPeriods.Split(',');
            var given = a.Periods ?? [];
            var seenPeriods = new HashSet<string>(StringComparer.Ordinal);
            var needsRationale = new List<string>();
            if (given.Count > targetPeriods.Length)
            {
                errors.Add($"{at}.periods", $"At most {targetPeriods.Length} periods: one per target period.");
                continue;
            }
            for (var j = 0; j < given.Count; j++)
            {
                var p = given[j];
                var pat = $"{at}.periods[{j}]";
                if (p is null)
                {
                    errors.Add(pat, "A period's answer is missing.");
                    continue;
                }
                var period = Period.TryParse(p.Period, out var parsed) ? parsed.Value.ToString() : "";
                if (!targetPeriods.Contains(period))
                {
                    errors.Add($"{pat}.period", $"'{Clip(p.Period)}' is not a target period of this question ({q.TargetPeriods}).");
                    continue;
                }
                if (!seenPeriods.Add(period))
                {
                    errors.Add($"{pat}.period", $"{period} is answered twice.");
                    continue;
                }
                var unit = q.Indicator?.UnitLabel ?? "";
                double? headline;
                if (q.Format == ResponseFormat.Range)
                {
                    var values = new[] { ("p10", p.P10), ("p50", p.P50), ("p90", p.P90) };
                    if (values.All(v => v.Item2 is null))
                    {
                        if (!input.Draft)
                        {
                            errors.Add($"{pat}.p50", $"{period}: give P10, P50 and P90.");
                        }
                        continue;
                    }
                    foreach (var (name, v) in values)
                    {
                        if (v is null && !input.Draft)
                        {
                            errors.Add($"{pat}.{name}", $"{period}: {name.ToUpperInvariant()} is required.");
                        }
                        CheckBounds(errors, warnings, q, $"{pat}.{name}", $"{period} {name.ToUpperInvariant()}", v, unit);
                    }
                    if (p.P10 is { } a10 && p.P50 is { } a50 && p.P90 is { } a90)
                    {
                        var check = RangeAnswer.TryCreate(a10, a50, a90);
                        if (!check.IsValid)
                        {
                            var field = check.Field is "P90" ? "p90" : check.Field is "P50" ? "p50" : "p10";
                            errors.Add($"{pat}.{field}", $"{period}: {Ordering(check.Field, a10, a50, a90)}");
                        }
                    }
                    else if ((p.P10 > p.P50) || (p.P50 > p.P90) || (p.P10 > p.P90))
                    {
                        // A draft with two of the three quantiles is still checked for their order.
                        errors.Add($"{pat}.p10", $"{period}: P10, P50 and P90 must be in order (P10 ≤ P50 ≤ P90).");
                    }
                    headline = p.P50;
                }
                else
                {
                    if (p.Value is null)
                    {
                        if (!input.Draft)
                        {
                            errors.Add($"{pat}.value", $"{period}: a value is required.");
                        }
                        continue;
                    }
                    CheckBounds(errors, warnings, q, $"{pat}.value", period, p.Value, unit);
                    headline = p.Value;
                }
                // Implementation note: the test uses fences computed from the quartiles the expert
                // was shown, never from an individual's answer (such as the lowest retained one), so
                // that probing with submissions reveals nothing the feedback did not show.
                if (headline is { } h && previousFeedback.TryGetValue((q.Id, period), out var spread) && spread is not null
                    && UsualRange(spread) is var (low, high) && (h < low || h > high))
                {
                    needsRationale.Add(FormattableString.Invariant($"{period} ({h:0.##} is outside {low:0.##} to {high:0.##})"));
                }
                rows.Add(new Estimate
                {
                    QuestionId = q.Id, Period = period, Value = q.Format == ResponseFormat.Point ? p.Value : null,
                    P10 = q.Format == ResponseFormat.Range ? p.P10 : null, P50 = q.Format == ResponseFormat.Range ? p.P50 : null,
                    P90 = q.Format == ResponseFormat.Range ? p.P90 : null, Confidence = a.Confidence, Rationale = rationale, IsDraft = input.Draft,
                });
            }
            if (!input.Draft)
            {
                foreach (var missing in targetPeriods.Where(t => !seenPeriods.Contains(t)))
                {
                    errors.Add($"{at}.periods", $"{missing}: a value is required.");
                }
                if (needsRationale.Count > 0 && rationale is null)
                {
                    errors.Add($"{at}.rationale", "Your answer for " + string.Join(", ", needsRationale)
                        + " lies outside the group's usual range in the previous round (the quartiles widened by 1.5 times the interquartile range): please give a rationale.");
                }
            }
        }
        if (!input.Draft)
        {
            foreach (var q in panel.Questions.Where(q => !seenQuestions.Contains(q.Id)))
            {
                errors.Add("answers", $"\"{q.Label}\" is not answered.");
            }
        }
        if (rows.Count == 0 && !errors.Any)
        {
            errors.Add("answers", "Nothing to save: enter at least one value.");
        }
        return (errors, warnings, rows);
    }

    /// <summary>Tukey's fences on the shown quartiles: Q1 − 1.5·IQR to Q3 + 1.5·IQR.</summary>
    public static (double Low, double High) UsualRange(AnonymousSpread spread)
    {
        var iqr = spread.Q3 - spread.Q1;
        return (spread.Q1 - (1.5 * iqr), spread.Q3 + (1.5 * iqr));
    }

    private static void CheckBounds(FieldErrors errors, List<string> warnings, Question q, string field, string label, double? value, string unit)
    {
        if (value is not { } v)
        {
            return;
        }
        if (Numbers.LimitError(v) is { } limit)
        {
            errors.Add(field, $"{label}: {limit}");
            return;
        }
        if (q.HardMin is { } min && v < min)
        {
            errors.Add(field, string.Create(CultureInfo.InvariantCulture, $"{label}: below the lowest allowed value, {min} {unit}."));
        }
        else if (q.HardMax is { } max && v > max)
        {
            errors.Add(field, string.Create(CultureInfo.InvariantCulture, $"{label}: above the highest allowed value, {max} {unit}."));
        }
        else if ((q.PlausibleMin is { } pmin && v < pmin) || (q.PlausibleMax is { } pmax && v > pmax))
        {
            warnings.Add(string.Create(CultureInfo.InvariantCulture, $"{q.Label}, {label}: {v} {unit} is outside the plausible range {q.PlausibleMin} to {q.PlausibleMax}; are you sure?"));
        }
    }

    private static string Clip(string? text) => text is null ? "" : text.Length > 20 ? text[..20] + "…" : text;

    private static string Ordering(string? field, double p10, double p50, double p90) => field switch
    {
        "P90" when p50 > p90 => string.Create(CultureInfo.InvariantCulture, $"P90 ({p90}) must not be below P50 ({p50})."),
        _ when p10 > p50 => string.Create(CultureInfo.InvariantCulture, $"P10 ({p10}) must not be above P50 ({p50})."),
        _ => "P10, P50 and P90 must be finite numbers in order.",
    };
}
