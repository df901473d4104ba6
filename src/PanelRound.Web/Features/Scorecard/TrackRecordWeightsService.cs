using System.Text.Json.Serialization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Core.Scoring;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Results;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>One membership's track-record weight in one weight set.</summary>
/// <param name="MembershipId">The membership.</param>
/// <param name="PanelCode">Its panel code (staff see codes, not names).</param>
/// <param name="ExpertKey">The expert's internal scorecard key (not serialised: staff views show panel codes).</param>
/// <param name="ScoredForecasts">The number of scored forecasts behind the weight (0 = no record: the pool-average weight).</param>
/// <param name="PooledScaledError">The expert's own mean scaled error; null without a record.</param>
/// <param name="ShrunkError">The error after shrinkage towards the pool mean; null when nobody has a record (the weights are then equal).</param>
/// <param name="Weight">The normalised weight; the panel's weights of one set sum to 1.</param>
public sealed record MemberWeight(
    int MembershipId, string PanelCode, [property: JsonIgnore] string ExpertKey, int ScoredForecasts, double? PooledScaledError, double? ShrunkError, double Weight);

/// <summary>The weights of a panel's members by one measure: the set its questions of one response format use.</summary>
/// <param name="Measure">Scaled absolute error (Point questions) or scaled interval score (Range questions).</param>
/// <param name="RecordN">The scored forecasts of every expert the pool mean rests on (its n).</param>
/// <param name="PoolMeanError">The pool mean of the scaled error; null when nobody has a record (the weights are then equal).</param>
/// <param name="Members">One line per membership, by panel code.</param>
public sealed record MemberWeightSet(
    TrackRecordMeasure Measure, int RecordN, double? PoolMeanError,
    IReadOnlyList<MemberWeight> Members)
{
    /// <summary>True when someone had a record, so the weights can differ from equal weights.</summary>
    public bool HasRecord => PoolMeanError is not null;

    [JsonIgnore]
    public IReadOnlyDictionary<int, double> ByMembership => Members.ToDictionary(m => m.MembershipId, m => m.Weight);
}

/// <summary>The track-record weights of a panel's members at a moment, with what they rest on.</summary>
/// <param name="PanelId">The panel.</param>
/// <param name="AsOf">The moment: only outcomes known, and panels closed, before its day count.</param>
/// <param name="HistoryItems">The scored items known before that day.</param>
/// <param name="PseudoForecasts">k, the shrinkage strength.</param>
/// <param name="Point">The weights of its Point questions (scaled absolute error); null when it has none.</param>
/// <param name="Range">The weights of its Range questions (scaled interval score); null when it has none.</param>
public sealed record PanelWeights(int PanelId, DateTime AsOf, int HistoryItems, double PseudoForecasts, MemberWeightSet? Point, MemberWeightSet? Range)
{
    /// <summary>The weights by membership of each set, for the consensus.</summary>
    [JsonIgnore]
    public MemberWeightsByFormat ByFormat => new(Point?.ByMembership, Range?.ByMembership);
}

/// <summary>
/// Track-record weights of a panel's members from their scored forecasts before a moment: the
/// pooled scaled error of each expert over the final-round items whose outcome was known and
/// whose panel had concluded before the moment's day (the backtest's no-look-ahead rule), shrunk
/// towards the pool mean with k pseudo-forecasts (<c>Scoring:PseudoForecasts</c>), inverted and
/// normalised over the panel's members. As in the backtest, Point questions use the scaled
/// absolute error and Range questions the scaled interval score.
/// </summary>
public sealed class TrackRecordWeightsService(PanelRoundDbContext db, ScoringDataLoader scoring, IOptions<ScoringOptions> options) : IMemberWeights
{
    public async Task<MemberWeightsByFormat?> ForPanelAsync(int panelId, DateTime asOf) =>
        (await DetailAsync(panelId, asOf))?.ByFormat;

    /// <summary>The weights with their records; null when the panel does not exist.</summary>
    /// <param name="panelId">The panel.</param>
    /// <param name="asOf">The moment.</param>
    /// <param name="data">The scoring data when the caller has loaded it already.</param>
    public async Task<PanelWeights?> DetailAsync(int panelId, DateTime asOf, ScoringData? data = null)
    {
        if (!await db.Panels.AnyAsync(p => p.Id == panelId))
        {
            return null;
        }
        var formats = await db.Questions.AsNoTracking().Where(q => q.PanelId == panelId).Select(q => q.Format).Distinct().ToListAsync();
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panelId).OrderBy(m => m.PanelCode)
            .Select(m => new SnapshotMember(m.Id, m.PanelCode, m.ExpertId)).ToListAsync();
        return Detail(panelId, formats, members, asOf, data ?? await scoring.LoadAsync());
    }

    /// <summary>The weights with their records, from a panel's question formats and members (by panel code) and the scoring data, already read.</summary>
    public PanelWeights Detail(int panelId, IReadOnlyCollection<ResponseFormat> formats, IReadOnlyList<SnapshotMember> members, DateTime asOf, ScoringData data)
    {
        ArgumentNullException.ThrowIfNull(formats);
        ArgumentNullException.ThrowIfNull(members);
        ArgumentNullException.ThrowIfNull(data);
        var day = DateOnly.FromDateTime(asOf);
        var known = data.ExpertItems.Where(i => Backtest.IsKnownBefore(i, day)).ToList();
        var keys = members.Select(m => ScoringDataLoader.ExpertKeyOf(m.ExpertId)).Distinct(StringComparer.Ordinal).ToList();
        var k = options.Value.PseudoForecasts;

        MemberWeightSet Set(TrackRecordMeasure measure)
        {
            var set = TrackRecordWeights.Compute(TrackRecordWeights.Records(known, measure), keys, k);
            var byKey = set.Experts.ToDictionary(e => e.ExpertKey, StringComparer.Ordinal);
            var lines = members.Select(m =>
            {
                var w = byKey[ScoringDataLoader.ExpertKeyOf(m.ExpertId)];
                return new MemberWeight(
                    m.Id, m.PanelCode, w.ExpertKey, w.N, Figures.Finite(w.PooledScaledError), set.PoolMeanError is null ? null : Figures.Finite(w.ShrunkError), w.Weight);
            }).ToList();
            return new MemberWeightSet(measure, set.PoolN, Figures.Finite(set.PoolMeanError), lines);
        }

        // A panel without questions yet shows the Point set, the one its first questions will most likely use.
        var point = formats.Count == 0 || formats.Contains(ResponseFormat.Point) ? Set(TrackRecordMeasure.ScaledAbsoluteError) : null;
        var range = formats.Contains(ResponseFormat.Range) ? Set(TrackRecordMeasure.ScaledIntervalScore) : null;
        return new PanelWeights(panelId, asOf, known.Count, k, point, range);
    }
}
