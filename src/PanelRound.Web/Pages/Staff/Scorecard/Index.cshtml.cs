using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Scorecard;

[Authorize(Policy = AuthSetup.ReviewerPolicy)]
public class IndexModel(ScorecardService scorecard, CalibrationResults calibration) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public string? Indicator { get; set; }

    [BindProperty(SupportsGet = true)]
    public string? Period { get; set; }

    public ScorecardView View { get; private set; } = null!;

    /// <summary>Each expert's early record from calibration questions (filters do not apply to it).</summary>
    public IReadOnlyList<ExpertEarlyRecord> EarlyRecords { get; private set; } = [];

    public async Task OnGetAsync()
    {
        View = await scorecard.ScorecardAsync(new ScorecardFilter(
            string.IsNullOrWhiteSpace(Indicator) ? null : Indicator.Trim(), string.IsNullOrWhiteSpace(Period) ? null : Period.Trim()));
        EarlyRecords = await calibration.EarlyRecordsAsync();
    }
}
