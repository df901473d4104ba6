using System.Globalization;
using System.Security.Claims;
using Microsoft.AspNetCore.Authentication;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// An expert's access: a personal-link token (header <c>X-Expert-Token</c> in the API), or the
/// cookie the link was exchanged for. The cookie names one membership and the hash of the token
/// it came from, so a re-issued or revoked link ends every cookie made from the old one.
/// </summary>
public static class ExpertAccess
{
    public const string TokenHeader = "X-Expert-Token";
    private const string MembershipClaim = "panelround:membership";
    private const string StampClaim = "panelround:stamp";

    public static async Task<PanelMembership?> CurrentAsync(HttpContext ctx, PanelRoundDbContext db)
    {
        if (ctx.Request.Headers.TryGetValue(TokenHeader, out var token) && !string.IsNullOrWhiteSpace(token))
        {
            return await ResolveTokenAsync(db, token.ToString());
        }
        var auth = await ctx.AuthenticateAsync(AuthSetup.ExpertScheme);
        if (!auth.Succeeded
            || !int.TryParse(auth.Principal.FindFirstValue(MembershipClaim), NumberStyles.None, CultureInfo.InvariantCulture, out var id))
        {
            return null;
        }
        var stamp = auth.Principal.FindFirstValue(StampClaim);
        return await db.Memberships.FirstOrDefaultAsync(m => m.Id == id && m.TokenHash == stamp && m.State != MembershipState.Revoked);
    }

    /// <summary>Whether the request presents an expert credential at all: a token header, or a link cookie that still reads.</summary>
    public static async Task<bool> PresentedAsync(HttpContext ctx) =>
        !string.IsNullOrWhiteSpace(ctx.Request.Headers[TokenHeader]) || (await ctx.AuthenticateAsync(AuthSetup.ExpertScheme)).Succeeded;

    /// <summary>The membership a token opens, or null for an unknown or revoked token.</summary>
    public static Task<PanelMembership?> ResolveTokenAsync(PanelRoundDbContext db, string? token)
    {
        if (string.IsNullOrWhiteSpace(token))
        {
            return Task.FromResult<PanelMembership?>(null);
        }
        // Implementation note: the hash is computed here, not inside the query: a method call in a
        // query's expression is compiled into a delegate on every execution.
        var hash = Secrets.Hash(token.Trim());
        return db.Memberships.FirstOrDefaultAsync(m => m.TokenHash == hash && m.State != MembershipState.Revoked);
    }

    /// <summary>Exchanges a valid link for the expert cookie.</summary>
    public static Task SignInAsync(HttpContext ctx, PanelMembership m) =>
        ctx.SignInAsync(AuthSetup.ExpertScheme, new ClaimsPrincipal(new ClaimsIdentity(
        [
            new Claim(MembershipClaim, m.Id.ToString(CultureInfo.InvariantCulture)),
            new Claim(StampClaim, m.TokenHash),
            new Claim(ClaimTypes.Name, "expert:" + m.PanelCode),
        ], AuthSetup.ExpertScheme)));
}
