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

/// <summary>One question-period of the round a conclusion would publish: its n, convergence and stability, and what to watch.</summary>
/// <param name="Period">The target period.</param>
/// <param name="N">The answers counted.</param>
/// <param name="RelativeIqr">IQR / |median|; null when undefined (median 0) or no answers.</param>
/// <param name="ConsensusReached">The relative IQR is at most the threshold, with enough answers (as on the results page).</param>
/// <param name="Stability">The moves since the previous round; null in round 1.</param>
/// <param name="Warnings">Why the facilitator may hesitate: too few answers, consensus not reached.</param>
public sealed record ConclusionPeriodReview(
    string Period, int N, double? RelativeIqr, bool ConsensusReached, Core.Statistics.StabilityAssessment? Stability, IReadOnlyList<string> Warnings);

/// <summary>A question in the review; a calibration question is listed but never published.</summary>
public sealed record ConclusionQuestionReview(int QuestionId, string Label, bool Calibration, IReadOnlyList<ConclusionPeriodReview> Periods);

/// <summary>
/// What concluding would publish, read from the facilitator's results (<see cref="PanelResults"/>: the same
/// convergence and stability as the results page) for the last closed round: per question-period n, the relative
/// IQR against the consensus threshold, the share of experts who moved and the Wilcoxon p, with warnings where n
/// is below the panel's minimum group size or consensus was not reached.
/// </summary>
public sealed record ConclusionReview(
    int Round, DateTime? ClosedAt, double Threshold, int MinimumGroupSize, int MinimumForConsensus, IReadOnlyList<ConclusionQuestionReview> Questions)
{
    private IEnumerable<ConclusionPeriodReview> Published => Questions.Where(q => !q.Calibration).SelectMany(q => q.Periods).Where(p => p.N > 0);

    /// <summary>The question-periods that get a consensus.</summary>
    public int PublishedCount => Published.Count();

    public int BelowMinimumCount => Published.Count(p => p.N < MinimumGroupSize);

    public int NotReachedCount => Published.Count(p => !p.ConsensusReached);

    public int FewestAnswers => Published.Select(p => p.N).DefaultIfEmpty(0).Min();

    public int MostAnswers => Published.Select(p => p.N).DefaultIfEmpty(0).Max();

    /// <summary>The review of the panel's last closed round; null when no round has closed.</summary>
    public static ConclusionReview? From(Panel panel, PanelResultsView view)
    {
        var last = panel.Rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
        if (last is null)
        {
            return null;
        }
        var minimumForConsensus = Core.Statistics.Convergence.Assess(null, null, 0).MinimumN;
        var calibration = panel.Questions.Where(q => q.IsCalibration).Select(q => q.Id).ToHashSet();
        var questions = view.Questions.Select(q => new ConclusionQuestionReview(q.QuestionId, q.Label, calibration.Contains(q.QuestionId),
            q.Periods.Select(p => p.Rounds.FirstOrDefault(r => r.Round == last.Number) is { } r
                ? Period(p.Period, r, panel.Settings)
                : new ConclusionPeriodReview(p.Period, 0, null, false, null, ["No answers: nothing is published for this period."])).ToList())).ToList();
        return new ConclusionReview(last.Number, last.ClosedAt, panel.Settings.ConsensusThreshold, panel.Settings.MinimumGroupSize, minimumForConsensus, questions);
    }

    private static ConclusionPeriodReview Period(string period, RoundResult r, PanelSettings settings)
    {
        var n = r.Feedback.N;
        var warnings = new List<string>();
        var c = r.Convergence;
        if (n == 0)
        {
            warnings.Add("No answers: nothing is published for this period.");
        }
        else
        {
            if (n < settings.MinimumGroupSize)
            {
                warnings.Add($"Only {n} answer{(n == 1 ? "" : "s")}: fewer than the panel's minimum group size ({settings.MinimumGroupSize}).");
            }
            if (!c.ConsensusReached)
            {
                warnings.Add(c.RelativeIqr is not { } iqr
                    ? "Consensus not reached: the median is 0, so the relative IQR is undefined."
                    : iqr > c.Threshold
                        ? $"Consensus not reached: relative IQR {NumberText.Percent(iqr)} is above the threshold of {NumberText.Percent(c.Threshold)}."
                        : $"Consensus not reached: it needs at least {c.MinimumN} answers.");
            }
        }
        return new ConclusionPeriodReview(period, n, c.RelativeIqr, c.ConsensusReached, r.Stability, warnings);
    }

    /// <summary>What was published, for the message after concluding.</summary>
    public string PublishedText()
    {
        var text = $"Panel concluded: the consensus of round {Round} is published for {PublishedCount} question-period{(PublishedCount == 1 ? "" : "s")}.";
        if (BelowMinimumCount > 0)
        {
            text += $" {BelowMinimumCount} of them rest on fewer answers than the minimum group size ({MinimumGroupSize}).";
        }
        if (NotReachedCount > 0)
        {
            text += $" Consensus was not reached in {NotReachedCount}.";
        }
        return text;
    }
}
