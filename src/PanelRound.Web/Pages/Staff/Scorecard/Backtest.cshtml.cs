using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Scorecard;

[Authorize(Policy = AuthSetup.ReviewerPolicy)]
public class BacktestModel(ScorecardService scorecard) : PageModel
{
    public BacktestView View { get; private set; } = null!;

    public async Task OnGetAsync() => View = await scorecard.BacktestAsync();
}
