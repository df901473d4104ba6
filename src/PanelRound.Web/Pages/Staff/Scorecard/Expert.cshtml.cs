using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Scorecard;

[Authorize(Policy = AuthSetup.ReviewerPolicy)]
public class ExpertModel(ScorecardService scorecard) : PageModel
{
    public ExpertScorecardView View { get; private set; } = null!;

    public async Task<IActionResult> OnGetAsync(int id) => this.PageOrNotFound(await scorecard.ExpertAsync(id), v => View = v);
}
