using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Pages.Staff.Panels;

public class IndexModel(PanelRoundDbContext db) : PageModel
{
    public IReadOnlyList<Panel> Panels { get; private set; } = [];

    public async Task OnGetAsync() =>
        Panels = await db.Panels.AsNoTracking().Include(p => p.Rounds).OrderByDescending(p => p.StartsOn).ToListAsync();
}
