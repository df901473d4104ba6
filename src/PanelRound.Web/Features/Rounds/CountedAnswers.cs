using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Rounds;

/// <summary>One expert's latest counted answer to a question-period in a round.</summary>
public sealed record CountedAnswer(int MembershipId, int QuestionId, string Period, double? Value, double? P10, double? P50, double? P90, string? Rationale)
{
    /// <summary>The value convergence and stability look at: the point value, or the P50.</summary>
    public double Headline => Value ?? P50 ?? double.NaN;

    public static CountedAnswer From(Estimate e) => new(e.MembershipId, e.QuestionId, e.Period, e.Value, e.P10, e.P50, e.P90, e.Rationale);
}

/// <summary>Loads the answers that count in a round, by the core's rule (<see cref="AnswerCounting"/>).</summary>
public static class CountedAnswers
{
    /// <summary>The latest submitted (not draft) answer of each membership to each question-period of a round.</summary>
    /// <remarks>A revoked membership's answers do not count in rounds that were still open when it was revoked (<see cref="AnswerCounting.AnswersCount"/>).</remarks>
    public static async Task<IReadOnlyList<CountedAnswer>> LoadAsync(PanelRoundDbContext db, int roundId)
    {
        var closedAt = await db.Rounds.Where(r => r.Id == roundId).Select(r => r.ClosedAt).SingleAsync();
        var rows = await db.Estimates.AsNoTracking().Where(e => e.RoundId == roundId && !e.IsDraft)
            .Join(db.Memberships, e => e.MembershipId, m => m.Id, (e, m) => new { Estimate = e, m.State, m.RevokedAt })
            .ToListAsync();
        return AnswerCounting.LatestRevisions(
                rows.Where(r => AnswerCounting.AnswersCount(r.State == MembershipState.Revoked, r.RevokedAt, closedAt)),
                r => (r.Estimate.MembershipId, r.Estimate.QuestionId, r.Estimate.Period), r => r.Estimate.Id)
            .Select(r => CountedAnswer.From(r.Estimate)).ToList();
    }
}
