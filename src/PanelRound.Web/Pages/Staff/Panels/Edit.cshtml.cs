using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Panels;

[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class EditModel(PanelRoundDbContext db, PanelSetup setup) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    [BindProperty]
    public PanelForm Input { get; set; } = new();

    public async Task<IActionResult> OnGetAsync()
    {
        var panel = await db.Panels.FindAsync(Id);
        if (panel is null)
        {
            return NotFound();
        }
        if (panel.State != PanelState.Draft)
        {
            return RedirectToPage("Details", new { id = Id });
        }
        Input = PanelForm.From(panel);
        return Page();
    }

    public async Task<IActionResult> OnPostAsync() =>
        await this.AnswerAsync(await setup.UpdatePanelAsync(Id, Input.ToInput(), Audit.ActorOf(User)), _ =>
        {
            TempData["flash"] = "Panel saved.";
            return RedirectToPage("Details", new { id = Id });
        });
}
