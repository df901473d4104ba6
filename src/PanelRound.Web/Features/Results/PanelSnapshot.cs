using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Results;

/// <summary>A panel member as the staff views need it: the membership, its panel code and its expert.</summary>
public sealed record SnapshotMember(int Id, string PanelCode, int ExpertId);

/// <summary>
/// One read of a panel for one request: the panel with its questions (and their indicators) and rounds,
/// its members, the answers that count in each round, the frozen feedback, the published consensus and
/// the reference series. The results, the consensus comparison, the benchmarks, the relations and the
/// calibration figures of one page are computed from the same snapshot instead of each loading it again.
/// </summary>
/// <remarks>
/// A snapshot is read-only and lives for one request; it is never kept between requests, so it cannot
/// go stale. The relations are read on first use (the results API does not need them).
/// </remarks>
public sealed class PanelSnapshot
{
    private readonly PanelRoundDbContext _db;
    private IReadOnlyList<QuestionRelation>? _relations;

    private PanelSnapshot(
        PanelRoundDbContext db, Panel panel, IReadOnlyList<SnapshotMember> members, IReadOnlyDictionary<int, IReadOnlyList<CountedAnswer>> answers,
        IReadOnlyList<FrozenFeedback> frozen, IReadOnlyList<ConsensusEntry> consensus, ILookup<int, SeriesPoint> references)
    {
        _db = db;
        Panel = panel;
        Members = members;
        Codes = members.ToDictionary(m => m.Id, m => m.PanelCode);
        AnswersByRound = answers;
        Frozen = frozen;
        Consensus = consensus;
        References = references;
        Rounds = [.. panel.Rounds.OrderBy(r => r.Number)];
        LastClosedRound = panel.Rounds.Where(r => r.State == RoundState.Closed).MaxBy(r => r.Number);
    }

    /// <summary>The panel with its questions, their indicators, and its rounds (not tracked).</summary>
    public Panel Panel { get; }

    /// <summary>The rounds by number.</summary>
    public IReadOnlyList<Round> Rounds { get; }

    /// <summary>The closed round with the highest number; null before any round closed.</summary>
    public Round? LastClosedRound { get; }

    /// <summary>The memberships, by panel code (in the database's order).</summary>
    public IReadOnlyList<SnapshotMember> Members { get; }

    /// <summary>Panel code by membership id.</summary>
    public IReadOnlyDictionary<int, string> Codes { get; }

    /// <summary>The answers that count (<see cref="CountedAnswers"/>) by round id.</summary>
    public IReadOnlyDictionary<int, IReadOnlyList<CountedAnswer>> AnswersByRound { get; }

    /// <summary>The frozen feedback of the panel's rounds.</summary>
    public IReadOnlyList<FrozenFeedback> Frozen { get; }

    /// <summary>The published consensus.</summary>
    public IReadOnlyList<ConsensusEntry> Consensus { get; }

    /// <summary>The reference series of the questions' indicators (observations before the panel's start), by indicator id.</summary>
    public ILookup<int, SeriesPoint> References { get; }

    /// <summary>The answers that count in a round of the panel.</summary>
    public IReadOnlyList<CountedAnswer> AnswersOf(Round round) => AnswersByRound[round.Id];

    /// <summary>The panel's relations, by id; read on first use.</summary>
    public async Task<IReadOnlyList<QuestionRelation>> RelationsAsync() =>
        _relations ??= await _db.Relations.AsNoTracking().Where(r => r.PanelId == Panel.Id).OrderBy(r => r.Id).ToListAsync();

    /// <summary>Reads a panel; null when it does not exist.</summary>
    public static async Task<PanelSnapshot?> LoadAsync(PanelRoundDbContext db, int panelId)
    {
        ArgumentNullException.ThrowIfNull(db);
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).Include(p => p.Rounds)
            .FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return null;
        }
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panelId).OrderBy(m => m.PanelCode)
            .Select(m => new SnapshotMember(m.Id, m.PanelCode, m.ExpertId)).ToListAsync();
        var answers = new Dictionary<int, IReadOnlyList<CountedAnswer>>();
        foreach (var r in panel.Rounds.OrderBy(r => r.Number))
        {
            answers[r.Id] = await CountedAnswers.LoadAsync(db, r.Id);
        }
        var roundIds = panel.Rounds.Select(r => r.Id).ToList();
        var frozen = await db.FrozenFeedback.AsNoTracking().Where(f => roundIds.Contains(f.RoundId)).ToListAsync();
        var consensus = await db.Consensus.AsNoTracking().Where(c => c.PanelId == panelId).ToListAsync();
        var references = await IndicatorCatalog.ReferenceSeriesAsync(db, panel.Questions.Select(q => q.IndicatorId).Distinct().ToList(), panel.StartsOn);
        return new PanelSnapshot(db, panel, members, answers, frozen, consensus, references);
    }
}
