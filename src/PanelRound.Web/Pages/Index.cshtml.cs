using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Pages;

public class IndexModel(PanelRoundDbContext db) : PageModel
{
    /// <summary>For signed-in staff: the panels that are running, then the latest others (at most six in all).</summary>
    public IReadOnlyList<Panel> Panels { get; private set; } = [];

    public async Task OnGetAsync()
    {
        if (User.Identity?.IsAuthenticated != true)
        {
            return;
        }
        var panels = await db.Panels.AsNoTracking().Include(p => p.Rounds).OrderByDescending(p => p.StartsOn).ThenByDescending(p => p.Id).ToListAsync();
        Panels = [.. panels.OrderBy(p => p.State switch { PanelState.Running => 0, PanelState.Draft => 1, _ => 2 }).Take(6)];
    }
}
