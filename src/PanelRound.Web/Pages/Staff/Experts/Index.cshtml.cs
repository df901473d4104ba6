using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Roster;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Experts;

/// <summary>The roster: the one staff view with experts' names next to their panels.</summary>
[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class IndexModel(PanelRoundDbContext db, ExpertRoster roster) : PageModel
{
    public sealed class ExpertForm
    {
        public string? Name { get; set; }

        public string? Email { get; set; }

        public string? Affiliation { get; set; }

        public string? Expertise { get; set; }

        public string? DeclaredInterests { get; set; }
    }

    [BindProperty]
    public ExpertForm Input { get; set; } = new();

    public IReadOnlyList<Expert> Experts { get; private set; } = [];

    public async Task OnGetAsync() =>
        Experts = await db.Experts.AsNoTracking().Include(e => e.Memberships).ThenInclude(m => m.Panel).OrderBy(e => e.Name).ToListAsync();

    public async Task<IActionResult> OnPostAsync() =>
        await this.AnswerAsync(
            await roster.CreateExpertAsync(new ExpertInput(Input.Name, Input.Email, Input.Affiliation, Input.Expertise, Input.DeclaredInterests), Audit.ActorOf(User)),
            _ => RedirectToPage(), OnGetAsync);
}
