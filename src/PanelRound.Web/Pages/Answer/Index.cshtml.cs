using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Answer;

/// <summary>The expert's page behind the personal link's cookie: the brief, the questions, feedback and the answer form.</summary>
public partial class IndexModel(PanelRoundDbContext db, ExpertAnswers answers, ExpertBenchmarkLine benchmarkLine, PanelRelations relations) : PageModel
{
    /// <summary>One period's inputs as typed: numbers are read by <see cref="Numbers.TryParseEntry"/> with the chosen separator, never by the server's culture.</summary>
    public sealed class PeriodForm
    {
        public string? Period { get; set; }

        public string? Value { get; set; }

        public string? P10 { get; set; }

        public string? P50 { get; set; }

        public string? P90 { get; set; }
    }

    public sealed class AnswerForm
    {
        public int QuestionId { get; set; }

        public int? Confidence { get; set; }

        public string? Rationale { get; set; }

        public List<PeriodForm> Periods { get; set; } = [];
    }

    [BindProperty]
    public List<AnswerForm> Answers { get; set; } = [];

    /// <summary>
    /// A key per rendered form (sent as the submission's idempotency key): a form sent twice, by a
    /// double click or a resend after a dropped connection, adds one revision, not two.
    /// </summary>
    [BindProperty]
    public string? FormKey { get; set; }

    /// <summary>The decimal separator the expert types numbers with ("point" or "comma"); by default from the browser's language.</summary>
    [BindProperty(SupportsGet = true)]
    public string? Decimals { get; set; }

    public DecimalSeparator Separator => Decimals == "comma" ? DecimalSeparator.Comma : DecimalSeparator.Point;

    public ExpertForm Form { get; private set; } = null!;

    public IReadOnlyList<string> Warnings { get; private set; } = [];

    /// <summary>The panel's chosen benchmark per question, when the panel shows one to experts; empty otherwise.</summary>
    public IReadOnlyDictionary<int, ExpertBenchmark> BenchmarkLines { get; private set; } = new Dictionary<int, ExpertBenchmark>();

    /// <summary>Notes on this expert's own answers only (relations between questions), from round 2 on.</summary>
    public IReadOnlyList<PrivateRelationNote> PrivateNotes { get; private set; } = [];

    private async Task LoadExtrasAsync(int membershipId)
    {
        BenchmarkLines = await benchmarkLine.ForPanelAsync(Form.PanelId);
        PrivateNotes = await relations.PrivateNotesAsync(membershipId);
    }

    [TempData]
    public string? Saved { get; set; }

    [TempData]
    public string? SavedWarnings { get; set; }

    public string? Conflict { get; private set; }

    public async Task<IActionResult> OnGetAsync()
    {
        // One connection for the whole request, not one per query.
        await db.Database.OpenConnectionAsync(HttpContext.RequestAborted);
        var m = await ExpertAccess.CurrentAsync(HttpContext, db);
        if (m is null)
        {
            return RedirectToPage("LinkNeeded");
        }
        Form = await answers.GetFormAsync(m);
        await LoadExtrasAsync(m.Id);
        Warnings = SavedWarnings is { Length: > 0 } w ? w.Split('\n') : [];
        Decimals = Decimals is "comma" or "point" ? Decimals : DefaultSeparator(Request.Headers.AcceptLanguage.ToString());
        FormKey = NewFormKey();
        return Page();
    }

    /// <summary>"comma" when the browser's first language writes decimals with a comma (e.g. de, fr, es), else "point".</summary>
    public static string DefaultSeparator(string? acceptLanguage)
    {
        var first = (acceptLanguage ?? "").Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries).FirstOrDefault()?.Split(';')[0];
        if (string.IsNullOrWhiteSpace(first))
        {
            return "point";
        }
        try
        {
            return CultureInfo.GetCultureInfo(first).NumberFormat.NumberDecimalSeparator == "," ? "comma" : "point";
        }
        catch (CultureNotFoundException)
        {
            return "point";
        }
    }

    public async Task<IActionResult> OnPostAsync(string action)
    {
        // One connection for the whole request, not one per query.
        await db.Database.OpenConnectionAsync(HttpContext.RequestAborted);
        var m = await ExpertAccess.CurrentAsync(HttpContext, db);
        if (m is null)
        {
            return RedirectToPage("LinkNeeded");
        }
        Decimals = Decimals is "comma" or "point" ? Decimals : DefaultSeparator(Request.Headers.AcceptLanguage.ToString());
        var draft = action == "draft";
        // A field the form could not bind (a confidence that is not a number) is a choice that is not valid.
        foreach (var entry in ModelState.Values.Where(e => e.Errors.Count > 0))
        {
            var count = entry.Errors.Count;
            entry.Errors.Clear();
            for (var i = 0; i < count; i++)
            {
                entry.Errors.Add("Not a valid choice.");
            }
        }
        var input = new SubmissionInput(draft, Answers.Select((a, qi) => new QuestionAnswerInput(a.QuestionId, a.Confidence, a.Rationale,
            a.Periods.Select((p, pi) => new PeriodAnswerInput(p.Period,
                Read(p.Value, $"answers[{qi}].periods[{pi}].value"), Read(p.P10, $"answers[{qi}].periods[{pi}].p10"),
                Read(p.P50, $"answers[{qi}].periods[{pi}].p50"), Read(p.P90, $"answers[{qi}].periods[{pi}].p90"))).ToList())).ToList());
        if (ModelState.ErrorCount == 0)
        {
            var key = FormKey is { } k && SubmissionKeys.Problem(k) is null ? k : null;
            var result = await answers.SubmitAsync(m, input, key);
            if (result.Errors.ContainsKey(SubmissionKeys.Header))
            {
                // The form was sent before with other answers (a page restored from the browser's history).
                result = Result<SubmissionReceipt>.Conflict("This form had already been sent with other answers. Check the answers below and send them again.");
            }
            if (result.IsOk)
            {
                var r = result.Value!;
                Saved = draft ? $"Draft saved ({r.Saved} values). It does not count until you submit." : $"Submitted for round {r.Round}: {r.Saved} values. You can revise until the round closes; the latest submission counts.";
                SavedWarnings = string.Join('\n', r.Warnings);
                return RedirectToPage(new { decimals = Decimals });
            }
            ModelState.AddResult(result, "");
            Conflict = result.Kind == ResultKind.Conflict ? result.Message : null;
        }
        Form = await answers.GetFormAsync(m);
        await LoadExtrasAsync(m.Id);
        FormKey = NewFormKey();
        ModelState.Remove(nameof(FormKey));
        return Page();
    }

    private static string NewFormKey() => $"form-{Guid.NewGuid():N}";

    /// <summary>The errors beside a field, keyed like the submission's (<c>answers[0].periods[1].value</c>; model-state keys ignore case), or null.</summary>
    public string? ErrorFor(string key) =>
        ModelState.TryGetValue(key, out var entry) && entry.Errors.Count > 0 ? string.Join(" ", entry.Errors.Select(e => e.ErrorMessage)) : null;

    /// <summary>Reads one typed number; an unreadable one is an error beside its field and nothing is saved.</summary>
    private double? Read(string? text, string field)
    {
        if (string.IsNullOrWhiteSpace(text))
        {
            return null;
        }
        var reading = Numbers.TryParseEntry(text, Separator);
        if (reading.IsValid)
        {
            return reading.Value;
        }
        ModelState.AddModelError(field, reading.Error!);
        return null;
    }

    /// <summary>The text the form shows: what was posted (after an error), else the current answer, else last round's own.</summary>
    public string Shown(int qi, int pi, ExpertPeriod p, Func<AnswerValues, double?> pick, Func<PeriodForm, string?> posted)
    {
        if (Answers.Count > qi && Answers[qi].Periods.Count > pi)
        {
            return posted(Answers[qi].Periods[pi]) ?? "";
        }
        var value = p.Current is { } c ? pick(c) : p.Previous is { } prev ? pick(prev) : null;
        return Typed(value);
    }

    /// <summary>
    /// The anonymous histogram as bars: the open-ended outer bins are drawn as wide as their inner
    /// neighbour and left out when empty (every edge comes from the shown quartiles).
    /// </summary>
    public static IReadOnlyList<(double Lower, double Upper, int Count)> Bars(Core.Statistics.AnonymousHistogram histogram)
    {
        var e = histogram.Edges;
        var c = histogram.Counts;
        if (e.Count == 0)
        {
            // One bin holding every answer says nothing the quartiles do not.
            return [];
        }
        var width = e.Count > 1 ? e[1] - e[0] : Math.Max(Math.Abs(e[0]) * 0.1, 1);
        var lastWidth = e.Count > 1 ? e[^1] - e[^2] : width;
        var bars = new List<(double, double, int)>();
        for (var i = 0; i < c.Count; i++)
        {
            var lower = i == 0 ? e[0] - width : e[i - 1];
            var upper = i == c.Count - 1 ? e[^1] + lastWidth : e[i];
            if ((i == 0 || i == c.Count - 1) && c[i] == 0)
            {
                continue;
            }
            bars.Add((lower, upper, c[i]));
        }
        return bars;
    }

    /// <summary>
    /// A number as the expert types it: full precision, thousands grouped by spaces, with their
    /// decimal separator ("5 159.9" or "5 159,9"); the page's reading rule takes it back unchanged.
    /// </summary>
    public string Typed(double? value) => TypedText(value, Separator);

    /// <summary>See <see cref="Typed"/>; exponent forms (beyond the grouping) are left ungrouped.</summary>
    public static string TypedText(double? value, DecimalSeparator separator)
    {
        var text = PageSupport.Raw(value);
        if (text.Length == 0 || text.Contains('E', StringComparison.OrdinalIgnoreCase))
        {
            return separator == DecimalSeparator.Comma ? text.Replace('.', ',') : text;
        }
        var sign = text.StartsWith('-') ? "-" : "";
        var body = text.TrimStart('-');
        var point = body.IndexOf('.', StringComparison.Ordinal);
        var whole = point < 0 ? body : body[..point];
        var fraction = point < 0 ? "" : (separator == DecimalSeparator.Comma ? "," : ".") + body[(point + 1)..];
        return sign + Group(whole, ' ') + fraction;
    }

    private static string Group(string digits, char mark)
    {
        var sb = new StringBuilder();
        for (var i = 0; i < digits.Length; i++)
        {
            if (i > 0 && (digits.Length - i) % 3 == 0)
            {
                sb.Append(mark);
            }
            sb.Append(digits[i]);
        }
        return sb.ToString();
    }

    /// <summary>
    /// A number for reading on this page, with the indicator's decimals: thousands grouped by a
    /// narrow no-break space and the expert's decimal separator, so that neither mark can be
    /// taken for the other ("5 340", "8.06" or "8,06").
    /// </summary>
    public string Num(double? value, int decimals)
    {
        var text = NumberText.Fixed(value, decimals);
        if (text == NumberText.Missing)
        {
            return text;
        }
        text = text.Replace(',', '\u202F');
        return Separator == DecimalSeparator.Comma ? text.Replace('.', ',') : text;
    }

    /// <summary>The id of an answer field on the page (<c>a0-p1-value</c>, <c>a1-p0-p10</c>), the target of the error summary's links.</summary>
    public static string FieldId(int qi, int pi, string name) => $"a{qi}-p{pi}-{name.ToLowerInvariant()}";

    /// <summary>A deadline in UTC as the page writes it, e.g. "Dec 14, 2026, 17:00 UTC".</summary>
    public static string UtcText(DateTime at) => at.ToString("MMM d, yyyy, HH:mm", CultureInfo.InvariantCulture) + " UTC";

    /// <summary>How long the open round has left, from the app's clock when the form was read ("11 days 23 hours").</summary>
    public string TimeLeft => Form.Round is { } r ? TimeLeftText.Describe(r.ClosesAt - Form.AsOf) : "";

    /// <summary>One line of the error summary: the text and the id of the field it links to.</summary>
    public sealed record SummaryLine(string Text, string Target);

    /// <summary>
    /// Every error of a refused submission, in the page's order, each linking to its field (an
    /// error of a whole question links to its first field; one of the whole form to the form).
    /// </summary>
    public IReadOnlyList<SummaryLine> ErrorSummary()
    {
        var lines = new List<(int Q, int P, int F, SummaryLine Line)>();
        foreach (var (key, entry) in ModelState)
        {
            if (entry.Errors.Count == 0 || key.Length == 0 || key.Equals(nameof(FormKey), StringComparison.OrdinalIgnoreCase))
            {
                continue;
            }
            var message = string.Join(" ", entry.Errors.Select(e => e.ErrorMessage));
            var m = FieldKey().Match(key);
            if (!m.Success || !int.TryParse(m.Groups["q"].Value, CultureInfo.InvariantCulture, out var qi) || qi >= Form.Questions.Count)
            {
                lines.Add((int.MaxValue, 0, 0, new SummaryLine(message, "answers-form")));
                continue;
            }
            var q = Form.Questions[qi];
            var field = m.Groups["f"].Value.ToLowerInvariant();
            if (m.Groups["p"].Success && int.TryParse(m.Groups["p"].Value, CultureInfo.InvariantCulture, out var pi) && pi < q.Periods.Count
                && field is "value" or "p10" or "p50" or "p90")
            {
                var period = q.Periods[pi].Period;
                var name = field == "value" ? "" : ", " + field.ToUpperInvariant();
                // The message names the period itself ("2028: a value is required."): said once, in the field's name.
                var said = PeriodPrefix().Replace(message, "");
                lines.Add((qi, pi, Array.IndexOf(FieldOrder, field), new SummaryLine($"{q.Label}, {period}{name}: {said}", FieldId(qi, pi, field))));
                continue;
            }
            var target = field switch
            {
                "confidence" => $"conf-{qi}",
                "rationale" => $"rat-{qi}",
                _ => q.Periods.Count > 0 ? FieldId(qi, 0, q.Format == ResponseFormat.Range ? "p10" : "value") : "answers-form",
            };
            lines.Add((qi, field == "rationale" ? int.MaxValue : field == "confidence" ? int.MaxValue - 1 : -1, 0, new SummaryLine($"{q.Label}: {message}", target)));
        }
        return [.. lines.OrderBy(x => x.Q).ThenBy(x => x.P).ThenBy(x => x.F).Select(x => x.Line)];
    }

    private static readonly string[] FieldOrder = ["value", "p10", "p50", "p90"];

    /// <summary>The ids the fields of an answer input are described by: its reading (live), and its error when it has one.</summary>
    public string DescribedBy(string id, string? error) => error is null ? $"{id}-echo" : $"{id}-echo {id}-error";

    [GeneratedRegex(@"^answers\[(?<q>\d+)\](?:\.periods(?:\[(?<p>\d+)\](?:\.(?<f>\w+))?)?|\.(?<f>\w+))?$", RegexOptions.IgnoreCase | RegexOptions.CultureInvariant)]
    private static partial Regex FieldKey();

    [GeneratedRegex(@"^\d{4}(?:Q\d)?(?: P\d0)?: ", RegexOptions.CultureInvariant)]
    private static partial Regex PeriodPrefix();
}
