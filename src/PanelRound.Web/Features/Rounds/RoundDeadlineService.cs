using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Rounds;

/// <summary>The <c>Rounds</c> configuration section.</summary>
public sealed class RoundOptions
{
    public const string Section = "Rounds";

    /// <summary><c>Rounds:DeadlineCheckSeconds</c>: how often open rounds past their deadline are closed; 0 turns it off.</summary>
    public int DeadlineCheckSeconds { get; set; } = 30;
}

/// <summary>
/// Closes rounds at their deadline. Several web instances may run it: each pass first takes a
/// lease row in the database, so only one instance closes rounds at a time.
/// </summary>
public sealed class RoundDeadlineService(IServiceScopeFactory scopes, Microsoft.Extensions.Options.IOptions<RoundOptions> options, TimeProvider clock, ILogger<RoundDeadlineService> log)
    : BackgroundService
{
    private const string LeaseName = "round-deadlines";
    private readonly string _holder = $"{Environment.MachineName}:{Environment.ProcessId}:{Guid.NewGuid():N}";

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var seconds = options.Value.DeadlineCheckSeconds;
        if (seconds <= 0)
        {
            return;
        }
        using var timer = new PeriodicTimer(TimeSpan.FromSeconds(seconds), clock);
        do
        {
            try
            {
                await CloseDueRoundsAsync(stoppingToken);
            }
            catch (Exception e) when (e is not OperationCanceledException)
            {
                // Implementation note: a database outage must not stop the host; the next tick tries again.
                log.LogWarning(e, "Closing rounds at their deadline failed; will try again.");
            }
        }
        while (await timer.WaitForNextTickAsync(stoppingToken));
    }

    /// <summary>One pass: take the lease, then close every open round whose deadline has passed.</summary>
    public async Task<int> CloseDueRoundsAsync(CancellationToken ct = default)
    {
        using var scope = scopes.CreateScope();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        var now = clock.GetUtcNow().UtcDateTime;
        if (!await TryTakeLeaseAsync(db, now, ct))
        {
            return 0;
        }
        var due = await db.Rounds.AsNoTracking().Where(r => r.State == RoundState.Open && r.ClosesAt <= now)
            .Select(r => new { r.Id, r.PanelId, r.Number }).ToListAsync(ct);
        var workflow = scope.ServiceProvider.GetRequiredService<RoundLifecycle>();
        var closed = 0;
        foreach (var r in due)
        {
            string? failure;
            try
            {
                var result = await workflow.CloseRoundAsync(r.PanelId, r.Number, "system:deadline");
                closed += result.IsOk ? 1 : 0;
                // "Closed already" means another closer won: not a failure.
                failure = result.IsOk || result.Message?.Contains("closed already", StringComparison.Ordinal) == true ? null : result.Message;
            }
            catch (Exception e) when (e is not OperationCanceledException)
            {
                log.LogWarning(e, "Closing round {Round} of panel {Panel} at its deadline failed.", r.Number, r.PanelId);
                failure = $"The round could not be closed ({e.GetType().Name}); the service tries again every {options.Value.DeadlineCheckSeconds} s.";
            }
            if (failure is not null)
            {
                await RecordFailureAsync(r.PanelId, r.Id, r.Number, failure, now, ct);
            }
        }
        return closed;
    }

    /// <summary>The audit action of a deadline close that failed; the panel page shows the latest one while the round is open.</summary>
    public const string CloseFailedAction = "round.close-failed";

    /// <summary>
    /// Audits a failed close once per distinct reason (not on every tick), in a fresh unit of work
    /// so that the failed one cannot take the audit entry down with it.
    /// </summary>
    private async Task RecordFailureAsync(int panelId, int roundId, int number, string reason, DateTime now, CancellationToken ct)
    {
        using var scope = scopes.CreateScope();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        var entityId = roundId.ToString(System.Globalization.CultureInfo.InvariantCulture);
        var last = await db.AuditEvents.AsNoTracking()
            .Where(a => a.Action == CloseFailedAction && a.EntityType == "Round" && a.EntityId == entityId)
            .OrderByDescending(a => a.Id).Select(a => a.Details).FirstOrDefaultAsync(ct);
        var details = new CloseFailure(number, reason);
        if (last is not null && System.Text.Json.JsonSerializer.Deserialize<CloseFailure>(last) == details)
        {
            return;
        }
        Infrastructure.Audit.Record(db, "system:deadline", CloseFailedAction, "Round", roundId, panelId, details, now);
        await db.SaveChangesAsync(ct);
    }

    /// <summary>The details of a <see cref="CloseFailedAction"/> audit event.</summary>
    public sealed record CloseFailure(int Round, string Reason);

    /// <summary>The latest failed deadline close of a panel's open round, or null.</summary>
    public static async Task<(DateTime At, CloseFailure Failure)?> LatestFailureAsync(PanelRoundDbContext db, int panelId, int openRoundId)
    {
        var entityId = openRoundId.ToString(System.Globalization.CultureInfo.InvariantCulture);
        var e = await db.AuditEvents.AsNoTracking()
            .Where(a => a.PanelId == panelId && a.Action == CloseFailedAction && a.EntityId == entityId)
            .OrderByDescending(a => a.Id).FirstOrDefaultAsync();
        return e?.Details is { } d && System.Text.Json.JsonSerializer.Deserialize<CloseFailure>(d) is { } f ? (e.At, f) : null;
    }

    private async Task<bool> TryTakeLeaseAsync(PanelRoundDbContext db, DateTime now, CancellationToken ct)
    {
        var until = now.AddSeconds(Math.Max(60, options.Value.DeadlineCheckSeconds * 2));
        var updated = await db.JobLeases.Where(l => l.Name == LeaseName && (l.ExpiresAt < now || l.Holder == _holder))
            .ExecuteUpdateAsync(s => s.SetProperty(l => l.Holder, _holder).SetProperty(l => l.ExpiresAt, until), ct);
        if (updated == 1)
        {
            return true;
        }
        if (await db.JobLeases.AnyAsync(l => l.Name == LeaseName, ct))
        {
            return false;
        }
        db.JobLeases.Add(new JobLease { Name = LeaseName, Holder = _holder, ExpiresAt = until });
        try
        {
            await db.SaveChangesAsync(ct);
            return true;
        }
        catch (DbUpdateException)
        {
            // Another instance inserted the lease first.
            return false;
        }
    }
}
