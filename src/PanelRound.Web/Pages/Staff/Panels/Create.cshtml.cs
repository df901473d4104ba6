using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Panels;

[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class CreateModel(PanelSetup setup) : PageModel
{
    [BindProperty]
    public PanelForm Input { get; set; } = new() { TargetPeriods = $"{DateTime.UtcNow.Year + 1}-{DateTime.UtcNow.Year + 5}", StartsOn = DateOnly.FromDateTime(DateTime.UtcNow) };

    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync() =>
        await this.AnswerAsync(await setup.CreatePanelAsync(Input.ToInput(), Audit.ActorOf(User)), p =>
        {
            TempData["flash"] = $"Draft panel \u201c{p.Title}\u201d created. Next: add its questions and experts, then open round 1.";
            return RedirectToPage("Details", new { id = p.Id });
        });
}
