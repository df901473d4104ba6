using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Roster;

/// <summary>New panel codes (<see cref="Secrets.NewPanelCode"/>) that no membership has: a code is never reused across panels.</summary>
public static class PanelCodes
{
    /// <summary><paramref name="count"/> distinct codes, none of them taken.</summary>
    public static async Task<List<string>> NewAsync(PanelRoundDbContext db, int count)
    {
        var codes = new HashSet<string>(StringComparer.Ordinal);
        while (codes.Count < count)
        {
            var batch = new HashSet<string>(StringComparer.Ordinal);
            while (batch.Count < count - codes.Count)
            {
                var code = Secrets.NewPanelCode();
                if (!codes.Contains(code))
                {
                    batch.Add(code);
                }
            }
            var list = batch.ToList();
            var taken = await db.Memberships.Where(m => list.Contains(m.PanelCode)).Select(m => m.PanelCode).ToListAsync();
            codes.UnionWith(batch.Except(taken, StringComparer.Ordinal));
        }
        return [.. codes];
    }
}
