using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Admin;

/// <summary>Administration: API keys (created here or with the create-api-key command) and the audit log.</summary>
[WritePolicy(AuthSetup.AdministratorPolicy)]
public class IndexModel(PanelRoundDbContext db) : PageModel
{
    public IReadOnlyList<ApiKey> Keys { get; private set; } = [];

    public IReadOnlyList<AuditEvent> Events { get; private set; } = [];

    [BindProperty(SupportsGet = true)]
    public string? Action { get; set; }

    [BindProperty]
    public string? KeyName { get; set; }

    [BindProperty]
    public string KeyRole { get; set; } = Roles.Facilitator;

    [TempData]
    public string? NewKey { get; set; }

    public string? Error { get; private set; }

    public async Task OnGetAsync()
    {
        Keys = await db.ApiKeys.AsNoTracking().OrderByDescending(k => k.CreatedAt).ToListAsync();
        var q = db.AuditEvents.AsNoTracking();
        if (!string.IsNullOrWhiteSpace(Action))
        {
            q = q.Where(e => e.Action == Action);
        }
        Events = await q.OrderByDescending(e => e.Id).Take(300).ToListAsync();
    }

    public async Task<IActionResult> OnPostCreateKeyAsync()
    {
        if (string.IsNullOrWhiteSpace(KeyName) || KeyName.Length > FieldLengths.Name || !Roles.All.Contains(KeyRole))
        {
            Error = "Give the key a name (at most 200 characters) and one of the roles.";
            await OnGetAsync();
            return Page();
        }
        NewKey = await ApiKeys.CreateAsync(db, KeyName, KeyRole, Audit.ActorOf(User));
        return RedirectToPage();
    }

    public async Task<IActionResult> OnPostRevokeKeyAsync(int id)
    {
        await ApiKeys.RevokeAsync(db, id, Audit.ActorOf(User));
        return RedirectToPage();
    }
}
