using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Core.Scoring;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>
/// Builds the core's scored items from the database: for each concluded panel, each expert's
/// counted answer (the latest submitted one; a link revoked before the round closed excluded, as
/// in <see cref="AnswerCounting.AnswersCount"/>) of every closed round,
/// set against the current observation of the question's indicator at the target period.
/// </summary>
/// <remarks>
/// Scores always follow the current value: a corrected outcome rescores every panel that asked
/// about that period. The day an outcome became known is the earliest over its history (a
/// correction does not make an outcome newer), each row's <c>ObservedOn</c>, else its recording day. Panels that have not concluded are left out: their last round, and so
/// their final-round answers, are not settled yet. Items whose period has no outcome yet are
/// left out; malformed answers (a range that is not ordered, a missing value) too.
///
/// Implementation note: what is loaded is kept in memory (<see cref="ScoringDataCache"/>) with the
/// fingerprint of everything it depends on, read in one query first: the concluded panels (their
/// number and the newest), the consensus rows, the observations and the revoked links. A concluded
/// panel's questions, rounds and answers, indicators and experts do not change, and observations
/// and consensus rows are only appended (a correction or republication is a new row), so the same
/// fingerprint means the same data.
/// </remarks>
public sealed class ScoringDataLoader(PanelRoundDbContext db, ScoringDataCache cache)
{
    /// <summary>The expert key of the panel's consensus scored as a virtual expert.</summary>
    public const string ConsensusKey = "consensus";

    /// <summary>The key pages and the API show for an expert: stable across panels (external key, else email).</summary>
    public static string ExpertKeyOf(string? externalKey, string email) => string.IsNullOrWhiteSpace(externalKey) ? email : externalKey;

    /// <summary>The internal key of an expert in scored items and weights: by id, never colliding (nor with <see cref="ConsensusKey"/>).</summary>
    public static string ExpertKeyOf(int expertId) => string.Create(CultureInfo.InvariantCulture, $"expert:{expertId}");

    /// <summary>The key pages and the API show for a panel: its external (imported) key, else <c>panel-{id}</c>.</summary>
    public static string DisplayKeyOf(Panel panel) => panel.ExternalKey ?? string.Create(CultureInfo.InvariantCulture, $"panel-{panel.Id}");

    /// <summary>The internal key of a panel in scored items and the backtest: by id, so an imported key can never collide with an app panel.</summary>
    public static string PanelKeyOf(int panelId) => string.Create(CultureInfo.InvariantCulture, $"panel:{panelId}");

    /// <summary>What the scored items are computed from; two loads see the same data unless one of these changed.</summary>
    public sealed record Fingerprint(int Concluded, int? LastConcluded, DateTime? LastConcludedAt, int? LastConsensus, int? LastObservation, int Revoked);

    /// <summary>The scored items, from memory while the data they come from is unchanged.</summary>
    public async Task<ScoringData> LoadAsync()
    {
        var fingerprint = (await db.Database.SqlQuery<Fingerprint>($"""
            SELECT (SELECT CAST(COUNT(*) AS INTEGER) FROM "Panels" WHERE "State" = {(int)PanelState.Concluded}) AS "Concluded",
                   (SELECT MAX("Id") FROM "Panels" WHERE "State" = {(int)PanelState.Concluded}) AS "LastConcluded",
                   (SELECT MAX("ConcludedAt") FROM "Panels" WHERE "State" = {(int)PanelState.Concluded}) AS "LastConcludedAt",
                   (SELECT MAX("Id") FROM "Consensus") AS "LastConsensus",
                   (SELECT MAX("Id") FROM "Observations") AS "LastObservation",
                   (SELECT CAST(COUNT(*) AS INTEGER) FROM "Memberships" WHERE "State" = {(int)MembershipState.Revoked}) AS "Revoked"
            """).ToListAsync()).Single();
        if (cache.Find(fingerprint) is { } hit)
        {
            return hit;
        }
        var data = await ReadAsync();
        cache.Keep(fingerprint, data);
        return data;
    }

    private async Task<ScoringData> ReadAsync()
    {
        var panels = await db.Panels.AsNoTracking().Where(p => p.State == PanelState.Concluded)
            .Include(p => p.Questions).ThenInclude(q => q.Indicator)
            .Include(p => p.Rounds)
            .AsSplitQuery().ToListAsync();
        var memberships = await db.Memberships.AsNoTracking().Where(m => m.Panel!.State == PanelState.Concluded)
            .Select(m => new { m.Id, m.PanelId, m.State, m.RevokedAt, m.ExpertId, m.Expert!.ExternalKey, m.Expert.Email, m.Expert.Name })
            .ToDictionaryAsync(m => m.Id);
        var estimates = await (
            from e in db.Estimates.AsNoTracking()
            join r in db.Rounds on e.RoundId equals r.Id
            where !e.IsDraft && r.State == RoundState.Closed && r.Panel!.State == PanelState.Concluded
            select new { e.Id, e.RoundId, r.PanelId, RoundNumber = r.Number, RoundClosedAt = r.ClosedAt, e.MembershipId, e.QuestionId, e.Period, e.Value, e.P10, e.P50, e.P90 })
            .ToListAsync();
        var consensus = await db.Consensus.AsNoTracking().Where(c => db.Panels.Any(p => p.Id == c.PanelId && p.State == PanelState.Concluded))
            .ToListAsync();
        var indicatorIds = panels.SelectMany(p => p.Questions).Select(q => q.IndicatorId).Distinct().ToList();
        var allObservations = await db.Observations.AsNoTracking()
            .Where(o => indicatorIds.Contains(o.IndicatorId))
            .OrderBy(o => o.PeriodSortKey)
            .ToListAsync();
        var observations = allObservations.Where(o => o.SupersededAt == null).ToList();
        var firstKnown = allObservations.GroupBy(o => (o.IndicatorId, o.Period))
            .ToDictionary(g => g.Key, g => g.Min(KnownOn));
        var byIndicator = observations.GroupBy(o => o.IndicatorId).ToDictionary(g => g.Key, g => g.ToList());
        var outcomes = new Dictionary<(int, string), OutcomeValue>();
        foreach (var o in observations)
        {
            outcomes[(o.IndicatorId, o.Period)] = new OutcomeValue(o.Value, firstKnown[(o.IndicatorId, o.Period)], o.Source);
        }

        var scoredPanels = new Dictionary<string, ScoredPanel>(StringComparer.Ordinal);
        var questionsById = new Dictionary<int, (ScoredPanel Panel, ScoredQuestion Question)>();
        foreach (var p in panels)
        {
            var closedRounds = p.Rounds.Where(r => r.State == RoundState.Closed).ToList();
            if (closedRounds.Count == 0)
            {
                continue;
            }
            var last = closedRounds.MaxBy(r => r.Number)!;
            var closedOn = DateOnly.FromDateTime(p.ConcludedAt ?? last.ClosedAt ?? last.ClosesAt);
            var questions = new List<ScoredQuestion>();
            var usedKeys = new HashSet<string>(StringComparer.Ordinal);
            // Calibration questions score experts early (Features/Calibration), never in the long-horizon record.
            foreach (var q in p.Questions.Where(q => !q.IsCalibration).OrderBy(q => q.Order))
            {
                var reference = byIndicator.GetValueOrDefault(q.IndicatorId, [])
                    .Where(o => Period.TryParse(o.Period, out var period) && period.Value.EndDate < p.StartsOn)
                    .Select(o => o.Value).ToList();
                // Implementation note: two questions of one panel about the same indicator get distinct keys.
                var key = usedKeys.Add(q.Indicator!.Key) ? q.Indicator.Key : $"{q.Indicator.Key}#{q.Order}";
                usedKeys.Add(key);
                questions.Add(new ScoredQuestion(
                    q.Id, key, q.IndicatorId, q.Indicator.Key, q.Indicator.Name, q.Label, q.Indicator.UnitLabel, q.Indicator.Decimals, q.Format,
                    q.TargetPeriods.Split(',', StringSplitOptions.RemoveEmptyEntries), NaiveScale.InSampleNaiveMae(reference), NaiveScale.LastValue(reference)));
            }
            var scored = new ScoredPanel(p.Id, PanelKeyOf(p.Id), DisplayKeyOf(p), p.Title, p.StartsOn, closedOn, last.Number, p.Settings, questions);
            scoredPanels[scored.Key] = scored;
            foreach (var q in questions)
            {
                questionsById[q.Id] = (scored, q);
            }
        }

        var experts = new Dictionary<string, ScoredExpert>(StringComparer.Ordinal);
        var items = new List<ScoredItem>();
        var counted = AnswerCounting.LatestRevisions(
            estimates.Where(e => memberships.TryGetValue(e.MembershipId, out var m) && AnswerCounting.AnswersCount(m.State == MembershipState.Revoked, m.RevokedAt, e.RoundClosedAt)),
            e => (e.RoundId, e.MembershipId, e.QuestionId, e.Period), e => e.Id);
        foreach (var e in counted)
        {
            if (!questionsById.TryGetValue(e.QuestionId, out var pq) || pq.Panel.Id != e.PanelId
                || !outcomes.TryGetValue((pq.Question.IndicatorId, e.Period), out var outcome))
            {
                continue;
            }
            var m = memberships[e.MembershipId];
            var expertKey = ExpertKeyOf(m.ExpertId);
            experts.TryAdd(expertKey, new ScoredExpert(m.ExpertId, expertKey, ExpertKeyOf(m.ExternalKey, m.Email), m.Name));
            var item = Item(pq.Panel, pq.Question, expertKey, e.Period, e.RoundNumber, outcome, e.Value, e.P10, e.P50, e.P90);
            if (item is not null)
            {
                items.Add(item);
            }
        }

        var consensusItems = new List<ScoredItem>();
        foreach (var c in consensus)
        {
            if (!questionsById.TryGetValue(c.QuestionId, out var pq) || !outcomes.TryGetValue((pq.Question.IndicatorId, c.Period), out var outcome))
            {
                continue;
            }
            // A Range question's consensus is its quantile-averaged P10 / P50 / P90 (the band is P10 to P90).
            var item = pq.Question.Format == ResponseFormat.Range && c.Low <= c.Value && c.Value <= c.High
                ? Item(pq.Panel, pq.Question, ConsensusKey, c.Period, pq.Panel.FinalRound, outcome, null, c.Low, c.Value, c.High)
                : Item(pq.Panel, pq.Question, ConsensusKey, c.Period, pq.Panel.FinalRound, outcome, c.Value, null, null, null);
            if (item is not null)
            {
                consensusItems.Add(item);
            }
        }

        return new ScoringData(
            items.OrderBy(i => i.ExpertKey, StringComparer.Ordinal).ThenBy(i => i.PanelClosedOn).ThenBy(i => i.PanelKey, StringComparer.Ordinal)
                .ThenBy(i => i.QuestionKey, StringComparer.Ordinal).ThenBy(i => i.Period, StringComparer.Ordinal).ThenBy(i => i.Round).ToList(),
            consensusItems, scoredPanels, experts, consensus, outcomes);
    }

    /// <summary>The day an observation row was known: its <c>ObservedOn</c>, else the day it was recorded.</summary>
    public static DateOnly KnownOn(Observation o) => o.ObservedOn ?? DateOnly.FromDateTime(o.RecordedAt);

    private static ScoredItem? Item(
        ScoredPanel panel, ScoredQuestion question, string expertKey, string period, int round, OutcomeValue outcome,
        double? value, double? p10, double? p50, double? p90)
    {
        var isRange = p10 is { } l && p50 is { } m && p90 is { } h && double.IsFinite(l) && double.IsFinite(m) && double.IsFinite(h) && l <= m && m <= h;
        if (!isRange && (value is null || !double.IsFinite(value.Value)))
        {
            return null;
        }
        return new ScoredItem
        {
            ExpertKey = expertKey,
            QuestionKey = question.Key,
            PanelKey = panel.Key,
            Period = period,
            Round = round,
            IsFinalRound = round == panel.FinalRound,
            Value = isRange ? null : value,
            P10 = isRange ? p10 : null,
            P50 = isRange ? p50 : null,
            P90 = isRange ? p90 : null,
            Outcome = outcome.Value,
            Scale = question.Scale.Value,
            NaiveForecast = question.NaiveForecast ?? double.NaN,
            PanelClosedOn = panel.ClosedOn,
            OutcomeKnownOn = outcome.KnownOn,
        };
    }
}

/// <summary>The last scoring data loaded and its fingerprint (one entry: the data is the whole record, and it only grows).</summary>
/// <remarks>Shared between requests: the data must not be changed by its readers.</remarks>
public sealed class ScoringDataCache
{
    private sealed record Entry(ScoringDataLoader.Fingerprint Fingerprint, ScoringData Data);

    private Entry? _last;

    public ScoringData? Find(ScoringDataLoader.Fingerprint fingerprint) => Volatile.Read(ref _last) is { } last && last.Fingerprint == fingerprint ? last.Data : null;

    public void Keep(ScoringDataLoader.Fingerprint fingerprint, ScoringData data) => Volatile.Write(ref _last, new Entry(fingerprint, data));
}
