using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Panels;

[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class QuestionModel(PanelRoundDbContext db, PanelSetup setup) : PageModel
{
    public sealed class QuestionForm
    {
        public int? IndicatorId { get; set; }

        public string? Label { get; set; }

        public string? HelpText { get; set; }

        public ResponseFormat Format { get; set; }

        public double? HardMin { get; set; }

        public double? HardMax { get; set; }

        public double? PlausibleMin { get; set; }

        public double? PlausibleMax { get; set; }

        public string? TargetPeriods { get; set; }

        public bool Calibration { get; set; }

        public bool LogScale { get; set; }
    }

    [BindProperty(SupportsGet = true)]
    public int PanelId { get; set; }

    [BindProperty(SupportsGet = true)]
    public int? QuestionId { get; set; }

    [BindProperty]
    public QuestionForm Input { get; set; } = new();

    public IReadOnlyList<Indicator> Indicators { get; private set; } = [];

    public string PanelPeriods { get; private set; } = "";

    public async Task<IActionResult> OnGetAsync()
    {
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == PanelId);
        if (panel is null)
        {
            return NotFound();
        }
        if (QuestionId is { } id && panel.Questions.FirstOrDefault(q => q.Id == id) is { } q)
        {
            Input = new QuestionForm
            {
                IndicatorId = q.IndicatorId, Label = q.Label, HelpText = q.HelpText, Format = q.Format, HardMin = q.HardMin, HardMax = q.HardMax,
                PlausibleMin = q.PlausibleMin, PlausibleMax = q.PlausibleMax, TargetPeriods = q.TargetPeriods,
                Calibration = q.IsCalibration, LogScale = q.LogScale,
            };
        }
        await LoadAsync();
        return Page();
    }

    public async Task<IActionResult> OnPostAsync()
    {
        var input = new QuestionInput(Input.IndicatorId, Input.Label, Input.HelpText, Input.Format.ToString(), Input.HardMin, Input.HardMax,
            Input.PlausibleMin, Input.PlausibleMax, Input.TargetPeriods, Input.Calibration, Input.LogScale);
        var result = QuestionId is { } id
            ? await setup.UpdateQuestionAsync(PanelId, id, input, Audit.ActorOf(User))
            : await setup.AddQuestionAsync(PanelId, input, Audit.ActorOf(User));
        return await this.AnswerAsync(result, q =>
        {
            TempData["flash"] = QuestionId is null ? $"Question \u201c{q.Label}\u201d added." : $"Question \u201c{q.Label}\u201d saved.";
            return RedirectToPage("Details", new { id = PanelId });
        }, LoadAsync);
    }

    private async Task LoadAsync()
    {
        Indicators = await db.Indicators.AsNoTracking().OrderBy(i => i.Name).ToListAsync();
        PanelPeriods = (await db.Panels.AsNoTracking().Where(p => p.Id == PanelId).Select(p => p.TargetPeriods).FirstOrDefaultAsync()) ?? "";
    }
}
