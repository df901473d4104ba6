using System.ComponentModel.DataAnnotations;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Outcomes;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Outcomes;

/// <summary>A target period some concluded panel asked about, with its current outcome and earlier values.</summary>
public sealed record OutcomeLine(Indicator Indicator, string Period, int Panels, Observation? Current, IReadOnlyList<Observation> Earlier);

[Authorize(Policy = AuthSetup.ReviewerPolicy)]
[WritePolicy(AuthSetup.ReviewerPolicy)]
public class IndexModel(PanelRoundDbContext db, OutcomeRecorder recorder, ScoringDataLoader scoring) : PageModel
{
    public sealed class OutcomeForm
    {
        [Display(Name = "Indicator")]
        public string? Indicator { get; set; }

        [Display(Name = "Period")]
        public string? Period { get; set; }

        [Display(Name = "Value")]
        public double? Value { get; set; }

        [Display(Name = "Source")]
        public string? Source { get; set; }

        [Display(Name = "Known on")]
        [DataType(DataType.Date)]
        public DateOnly? ObservedOn { get; set; }
    }

    [BindProperty]
    public OutcomeForm Input { get; set; } = new();

    public IReadOnlyList<Indicator> Indicators { get; private set; } = [];

    public IReadOnlyList<OutcomeLine> Lines { get; private set; } = [];

    public IReadOnlyList<string> FileErrors { get; private set; } = [];

    [TempData]
    public string? Message { get; set; }

    public async Task OnGetAsync() => await LoadAsync();

    public async Task<IActionResult> OnPostRecordAsync() =>
        await this.AnswerAsync(
            await recorder.RecordAsync(new OutcomeInput(Input.Indicator, Input.Period, Input.Value, Input.Source, Input.ObservedOn), Audit.ActorOf(User)),
            r =>
            {
                Message = Describe(r);
                return RedirectToPage();
            },
            LoadAsync);

    public async Task<IActionResult> OnPostImportAsync(IFormFile? file)
    {
        if (file is null || file.Length == 0)
        {
            FileErrors = ["Choose a CSV file."];
            await LoadAsync();
            return Page();
        }
        await using var stream = file.OpenReadStream();
        var result = await recorder.ImportCsvAsync(stream, Audit.ActorOf(User));
        if (!result.IsOk)
        {
            FileErrors = result.Errors.SelectMany(e => e.Value).ToList();
            await LoadAsync();
            return Page();
        }
        Message = Describe(result.Value!);
        return RedirectToPage();
    }

    private static string Describe(ObservationImportResult r) =>
        $"Recorded: {r.Added} new, {r.Corrected} corrected (earlier values kept in the history), {r.Unchanged} unchanged. The scorecard follows the current values.";

    private async Task LoadAsync()
    {
        Indicators = await db.Indicators.AsNoTracking().OrderBy(i => i.Name).ToListAsync();
        var data = await scoring.LoadAsync();
        var asked = data.Panels.Values.SelectMany(p => p.Questions.SelectMany(q => q.Periods.Select(period => (q.IndicatorId, Period: period, Panel: p.Id))))
            .GroupBy(x => (x.IndicatorId, x.Period)).ToDictionary(g => g.Key, g => g.Select(x => x.Panel).Distinct().Count());
        var ids = asked.Keys.Select(k => k.IndicatorId).Distinct().ToList();
        var rows = await db.Observations.AsNoTracking().Where(o => ids.Contains(o.IndicatorId)).ToListAsync();
        var byKey = rows.GroupBy(o => (o.IndicatorId, o.Period)).ToDictionary(g => g.Key, g => g.OrderByDescending(o => o.Id).ToList());
        var indicators = Indicators.ToDictionary(i => i.Id);
        Lines = asked.Select(a =>
            {
                var history = byKey.GetValueOrDefault(a.Key, []);
                return new OutcomeLine(indicators[a.Key.IndicatorId], a.Key.Period, a.Value,
                    history.FirstOrDefault(o => o.SupersededAt is null), history.Where(o => o.SupersededAt is not null).ToList());
            })
            .OrderBy(l => l.Current is null ? 0 : 1).ThenBy(l => l.Indicator.Name, StringComparer.Ordinal)
            .ThenBy(l => Core.Domain.Period.TryParse(l.Period, out var p) ? p.Value.SortKey : 0)
            .ToList();
    }
}
