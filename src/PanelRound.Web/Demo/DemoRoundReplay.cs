using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Demo;

/// <summary>
/// Replays a loaded demo panel's rounds through the app's own use cases: the scenario's closed
/// rounds are closed (their feedback frozen) and its concluded panels publish their consensus,
/// each at the historical moment, so the audit trail and the backtest see the dates the scenario says.
/// </summary>
internal static class DemoRoundReplay
{
    public static async Task ReplayAsync(IServiceProvider services, Panel panel, DemoPanel plan)
    {
        var db = services.GetRequiredService<PanelRoundDbContext>();
        var weights = services.GetRequiredService<IMemberWeights>();
        foreach (var r in plan.Rounds.Where(r => r.Closed).OrderBy(r => r.Number))
        {
            var round = panel.Rounds.Single(x => x.Number == r.Number);
            var at = new FixedClock(round.ClosesAt);
            var result = await new RoundLifecycle(db, at).CloseRoundAsync(panel.Id, r.Number, "demo");
            if (!result.IsOk)
            {
                throw new InvalidOperationException($"Demo: closing round {r.Number} of {plan.Key} failed: {result.Message}");
            }
        }
        if (plan.Concluded)
        {
            var at = new FixedClock(panel.Rounds.Max(r => r.ClosesAt).AddDays(2));
            var result = await new PanelConclusion(db, at, new ConsensusPublisher(db, at, weights)).ConcludeAsync(panel.Id, "demo");
            if (!result.IsOk)
            {
                throw new InvalidOperationException($"Demo: concluding {plan.Key} failed: {result.Message}");
            }
        }
        db.ChangeTracker.Clear();
    }

    private sealed class FixedClock(DateTime utc) : TimeProvider
    {
        public override DateTimeOffset GetUtcNow() => new(DateTime.SpecifyKind(utc, DateTimeKind.Utc));
    }
}
