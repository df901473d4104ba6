using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Results;

/// <summary>Concluding a panel: its consensus published from its last closed round, in the same transaction as the state change, audited.</summary>
public sealed class PanelConclusion(PanelRoundDbContext db, TimeProvider clock, ConsensusPublisher publisher)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private void Log(string actor, string action, string entityType, object entityId, int? panelId, object? details = null) =>
        Audit.Record(db, actor, action, entityType, entityId, panelId, details, Now);

    /// <summary>Concludes the panel: publishes the consensus of its last closed round; read-only from then on.</summary>
    public async Task<Result<IReadOnlyList<ConsensusEntry>>> ConcludeAsync(int panelId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Rounds).Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<IReadOnlyList<ConsensusEntry>>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State == PanelState.Concluded)
        {
            return Result<IReadOnlyList<ConsensusEntry>>.Conflict("The panel has concluded already.");
        }
        if (panel.Rounds.Any(r => r.State == RoundState.Open))
        {
            return Result<IReadOnlyList<ConsensusEntry>>.Conflict("Close the open round before concluding.");
        }
        var last = panel.Rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        if (last is null)
        {
            return Result<IReadOnlyList<ConsensusEntry>>.Conflict("No round has closed yet: there is nothing to publish.");
        }
        var entries = await publisher.ComputeAsync(panel, last);
        await using var tx = await db.Database.BeginTransactionAsync();
        db.Consensus.AddRange(entries);
        panel.State = PanelState.Concluded;
        panel.ConcludedAt = Now;
        panel.Version = Guid.NewGuid();
        Log(actor, "consensus.published", "Panel", panel.Id, panel.Id,
            new { round = last.Number, entries = entries.Count, weighting = panel.Settings.Weighting.ToString() });
        try
        {
            await db.SaveChangesAsync();
        }
        catch (DbUpdateException)
        {
            return Result<IReadOnlyList<ConsensusEntry>>.Conflict("The panel changed while concluding (it may have been concluded already); reload and try again.");
        }
        await tx.CommitAsync();
        return Result<IReadOnlyList<ConsensusEntry>>.Ok(entries);
    }
}
