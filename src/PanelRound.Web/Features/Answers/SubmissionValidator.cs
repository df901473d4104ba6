using System.Globalization;
using PanelRound.Core.Domain;
using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Answers;

public sealed record PeriodAnswerInput(string? Period, double? Value = null, double? P10 = null, double? P50 = null, double? P90 = null);

public sealed record QuestionAnswerInput(int QuestionId, int? Confidence, string? Rationale, IReadOnlyList<PeriodAnswerInput>? Periods);

public sealed record SubmissionInput(bool Draft, IReadOnlyList<QuestionAnswerInput>? Answers);

/// <summary>One answer of a valid submission, ready to store: the values of the question's format only.</summary>
public sealed record ValidatedAnswer(int QuestionId, string Period, double? Value, double? P10, double? P50, double? P90, int? Confidence, string? Rationale);

/// <summary>What the check of a submission found: field errors (keyed like <c>answers[0].periods[1].value</c>), warnings to show, and the answers to store when there is no error.</summary>
public sealed record SubmissionCheck(FieldErrors Errors, IReadOnlyList<string> Warnings, IReadOnlyList<ValidatedAnswer> Answers);

/// <summary>
/// The rules of an expert's submission: one answer per question, one per target period; values
/// finite, within ±10¹² and the question's hard bounds (outside the plausible range only a
/// warning); ranges ordered P10 ≤ P50 ≤ P90; a submission (not a draft) complete; confidence 1
/// to 5; the rationale at most <see cref="FieldLengths.Rationale"/> characters, and required
/// when the panel asks outliers to justify themselves and an answer lies outside the previous
/// round's usual range. Pure: no database, no clock.
/// </summary>
public static class SubmissionValidator
{
    /// <summary>Checks a submission against the panel's questions; the answers to store when there is no error.</summary>
    /// <param name="questions">The panel's questions, each with its indicator (for the unit).</param>
    /// <param name="input">The submission.</param>
    /// <param name="previousSpread">The spread of the previous round's feedback that experts were shown, by question and period (empty when outliers need not justify themselves).</param>
    public static SubmissionCheck Validate(
        IReadOnlyList<Question> questions, SubmissionInput input, IReadOnlyDictionary<(int QuestionId, string Period), AnonymousSpread?> previousSpread)
    {
        var errors = new FieldErrors();
        var warnings = new List<string>();
        var rows = new List<ValidatedAnswer>();
        var answers = input.Answers ?? [];
        var byId = questions.ToDictionary(q => q.Id);
        var seenQuestions = new HashSet<int>();
        if (answers.Count > byId.Count)
        {
            errors.Add("answers", $"At most {byId.Count} answers: one per question.");
            return new SubmissionCheck(errors, warnings, rows);
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
            if (!byId.TryGetValue(a.QuestionId, out var q))
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
                if (headline is { } h && previousSpread.TryGetValue((q.Id, period), out var spread) && spread is not null
                    && UsualRange(spread) is var (low, high) && (h < low || h > high))
                {
                    needsRationale.Add(FormattableString.Invariant($"{period} ({h:0.##} is outside {low:0.##} to {high:0.##})"));
                }
                rows.Add(new ValidatedAnswer(
                    q.Id, period, q.Format == ResponseFormat.Point ? p.Value : null,
                    q.Format == ResponseFormat.Range ? p.P10 : null, q.Format == ResponseFormat.Range ? p.P50 : null,
                    q.Format == ResponseFormat.Range ? p.P90 : null, a.Confidence, rationale));
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
            foreach (var q in questions.Where(q => !seenQuestions.Contains(q.Id)))
            {
                errors.Add("answers", $"\"{q.Label}\" is not answered.");
            }
        }
        if (rows.Count == 0 && !errors.Any)
        {
            errors.Add("answers", "Nothing to save: enter at least one value.");
        }
        return new SubmissionCheck(errors, warnings, rows);
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
