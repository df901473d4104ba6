using Microsoft.EntityFrameworkCore;
using PanelRound.Data;

namespace PanelRound.Web.Features.Rounds;

/// <summary>Who has answered a round: the one query behind the response tracker, the panel page and the reminders.</summary>
public static class RoundResponses
{
    /// <summary>The memberships with a submitted (not draft) answer in the round, whatever their state now.</summary>
    public static async Task<IReadOnlySet<int>> AnsweredAsync(PanelRoundDbContext db, int roundId) =>
        (await db.Estimates.AsNoTracking().Where(e => e.RoundId == roundId && !e.IsDraft).Select(e => e.MembershipId).Distinct().ToListAsync())
        .ToHashSet();
}
