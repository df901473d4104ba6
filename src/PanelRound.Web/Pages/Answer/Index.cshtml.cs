using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Data;
using PanelRound.Web.Application;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Answer;

/// <summary>The expert's page behind the personal link's cookie: the brief, the questions, feedback and the answer form.</summary>
public class IndexModel(PanelRoundDbContext db, ExpertAnswers answers) : PageModel
{
    public sealed class PeriodForm
    {
        public string? Period { get; set; }

        public double? Value { get; set; }

        public double? P10 { get; set; }

        public double? P50 { get; set; }

        public double? P90 { get; set; }
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

    public ExpertForm Form { get; private set; } = null!;

    /// <summary>Field errors keyed like the service's (<c>answers[0].periods[1].value</c>), plus the form-wide ones under "".</summary>
    public Dictionary<string, string[]> Errors { get; } = new(StringComparer.OrdinalIgnoreCase);

    public IReadOnlyList<string> Warnings { get; private set; } = [];

    [TempData]
    public string? Saved { get; set; }

    [TempData]
    public string? SavedWarnings { get; set; }

    public string? Conflict { get; private set; }

    public async Task<IActionResult> OnGetAsync()
    {
        var m = await ExpertAccess.CurrentAsync(HttpContext, db);
        if (m is null)
        {
            return RedirectToPage("LinkNeeded");
        }
        Form = await answers.GetFormAsync(m.Id);
        Warnings = SavedWarnings is { Length: > 0 } w ? w.Split('\n') : [];
        return Page();
    }

    public async Task<IActionResult> OnPostAsync(string action)
    {
        var m = await ExpertAccess.CurrentAsync(HttpContext, db);
        if (m is null)
        {
            return RedirectToPage("LinkNeeded");
        }
        var draft = action == "draft";
        foreach (var (key, entry) in ModelState.Where(kv => kv.Value?.Errors.Count > 0))
        {
            Errors[key] = entry!.Errors.Select(e => "Not a number.").ToArray();
        }
        if (Errors.Count == 0)
        {
            var input = new SubmissionInput(draft, Answers.Select(a => new QuestionAnswerInput(a.QuestionId, a.Confidence, a.Rationale,
                a.Periods.Select(p => new PeriodAnswerInput(p.Period, p.Value, p.P10, p.P50, p.P90)).ToList())).ToList());
            var outcome = await answers.SubmitAsync(m.Id, input);
            if (outcome.IsOk)
            {
                var r = outcome.Value!;
                Saved = draft ? $"Draft saved ({r.Saved} values). It does not count until you submit." : $"Submitted for round {r.Round}: {r.Saved} values. You can revise until the round closes; the latest submission counts.";
                SavedWarnings = string.Join('\n', r.Warnings);
                return RedirectToPage();
            }
            foreach (var (k, v) in outcome.Errors)
            {
                Errors[k] = v;
            }
            Conflict = outcome.Kind == OutcomeKind.Conflict ? outcome.Message : null;
        }
        Form = await answers.GetFormAsync(m.Id);
        return Page();
    }

    public string? ErrorFor(string key) => Errors.TryGetValue(key, out var e) ? string.Join(" ", e) : null;

    /// <summary>The value the form shows: what was posted (after an error), else the current answer, else last round's own.</summary>
    public double? Shown(int qi, int pi, ExpertPeriod p, Func<AnswerValues, double?> pick, Func<PeriodForm, double?> posted)
    {
        if (Answers.Count > qi && Answers[qi].Periods.Count > pi)
        {
            return posted(Answers[qi].Periods[pi]);
        }
        return p.Current is { } c ? pick(c) : p.Previous is { } prev ? pick(prev) : null;
    }
}
