using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Scorecard;

[Authorize(Policy = AuthSetup.ReviewerPolicy)]
public class ExpertModel(ScorecardService scorecard, CalibrationResults calibration) : PageModel
{
    public ExpertScorecardView View { get; private set; } = null!;

    /// <summary>The early record: the expert's calibration scores per panel, apart from the long-horizon record.</summary>
    public IReadOnlyList<EarlyRecordLine> EarlyRecord { get; private set; } = [];

    public async Task<IActionResult> OnGetAsync(int id)
    {
        EarlyRecord = await calibration.EarlyRecordAsync(id);
        return this.PageOrNotFound(await scorecard.ExpertAsync(id), v => View = v);
    }
}
