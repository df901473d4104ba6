using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Answer;

/// <summary>
/// Exchanges a personal link for the expert cookie and redirects to a URL without the token, so
/// the token appears in no later URL, referrer or log line.
/// </summary>
public class LinkModel(PanelRoundDbContext db, TimeProvider clock) : PageModel
{
    public async Task<IActionResult> OnGetAsync(string token)
    {
        Response.Headers["Referrer-Policy"] = "no-referrer";
        Response.Headers.CacheControl = "no-store";
        var m = await ExpertAccess.ResolveTokenAsync(db, token);
        if (m is null)
        {
            return RedirectToPage("LinkNeeded", new { reason = "unknown" });
        }
        if (m.State == MembershipState.Invited)
        {
            m.State = MembershipState.Active;
        }
        m.LastSeenAt = clock.GetUtcNow().UtcDateTime;
        await db.SaveChangesAsync();
        await ExpertAccess.SignInAsync(HttpContext, m);
        return RedirectToPage("Index");
    }
}
