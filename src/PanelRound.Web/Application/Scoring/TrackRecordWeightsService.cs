using System.Text.Json.Serialization;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Core.Scoring;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Application.Scoring;

/// <summary>One membership's track-record weight.</summary>
/// <param name="MembershipId">The membership.</param>
/// <param name="PanelCode">Its panel code (staff see codes, not names).</param>
/// <param name="ExpertKey">The expert's scorecard key (not serialised: staff views show panel codes).</param>
/// <param name="ScoredForecasts">The number of scored forecasts behind the weight (0 = no record: the pool-average weight).</param>
/// <param name="PooledScaledError">The expert's own mean scaled error; null without a record.</param>
/// <param name="ShrunkError">The error after shrinkage towards the pool mean.</param>
/// <param name="Weight">The normalised weight; the panel's weights sum to 1.</param>
public sealed record MemberWeight(int MembershipId, string PanelCode, [property: JsonIgnore] string ExpertKey, int ScoredForecasts, double? PooledScaledError, double ShrunkError, double Weight);

/// <summary>The track-record weights of a panel's members at a moment, with what they rest on.</summary>
/// <param name="PanelId">The panel.</param>
/// <param name="AsOf">The moment: only outcomes known, and panels closed, before its day count.</param>
/// <param name="Measure">Scaled absolute error, or the scaled interval score when every question of the panel is a Range question.</param>
/// <param name="HistoryItems">The scored items known before that day.</param>
/// <param name="PoolMeanError">The pool mean of the scaled error; null when nobody has a record (the weights are then equal).</param>
/// <param name="PseudoForecasts">k, the shrinkage strength.</param>
/// <param name="Members">One line per membership.</param>
public sealed record PanelWeights(
    int PanelId, DateTime AsOf, [property: JsonConverter(typeof(JsonStringEnumConverter<TrackRecordMeasure>))] TrackRecordMeasure Measure, int HistoryItems, double? PoolMeanError, double PseudoForecasts,
    IReadOnlyList<MemberWeight> Members)
{
    [JsonIgnore]
    public IReadOnlyDictionary<int, double> ByMembership => Members.ToDictionary(m => m.MembershipId, m => m.Weight);
}

/// <summary>
/// Track-record weights of a panel's members from their scored forecasts before a moment: the
/// pooled scaled error of each expert over the final-round items whose outcome was known and
/// whose panel had concluded before the moment's day (the backtest's no-look-ahead rule), shrunk
/// towards the pool mean with k pseudo-forecasts (<c>Scoring:PseudoForecasts</c>), inverted and
/// normalised over the panel's members.
/// </summary>
public sealed class TrackRecordWeightsService(PanelRoundDbContext db, ScoringService scoring, IOptions<ScoringOptions> options) : IMemberWeights
{
    public async Task<IReadOnlyDictionary<int, double>?> ForPanelAsync(int panelId, DateTime asOf) =>
        (await DetailAsync(panelId, asOf))?.ByMembership;

    /// <summary>The weights with their records; null when the panel does not exist.</summary>
    public async Task<PanelWeights?> DetailAsync(int panelId, DateTime asOf, ScoringData? data = null)
    {
        var formats = await db.Questions.AsNoTracking().Where(q => q.PanelId == panelId).Select(q => q.Format).ToListAsync();
        if (!await db.Panels.AnyAsync(p => p.Id == panelId))
        {
            return null;
        }
        var members = await db.Memberships.AsNoTracking().Where(m => m.PanelId == panelId).OrderBy(m => m.PanelCode)
            .Select(m => new { m.Id, m.PanelCode, m.Expert!.ExternalKey, m.Expert.Email }).ToListAsync();
        data ??= await scoring.LoadAsync();
        var day = DateOnly.FromDateTime(asOf);
        var known = data.ExpertItems.Where(i => Backtest.IsKnownBefore(i, day)).ToList();
        // Implementation note: one weight per member applies to all of a panel's questions, so the
        // interval score (defined for ranges only) is the measure only when every question is a Range question.
        var measure = formats.Count > 0 && formats.All(f => f == ResponseFormat.Range)
            ? TrackRecordMeasure.ScaledIntervalScore
            : TrackRecordMeasure.ScaledAbsoluteError;
        var keys = members.Select(m => ScoringService.ExpertKeyOf(m.ExternalKey, m.Email)).Distinct(StringComparer.Ordinal).ToList();
        var k = options.Value.PseudoForecasts;
        var set = TrackRecordWeights.Compute(TrackRecordWeights.Records(known, measure), keys, k);
        var byKey = set.Experts.ToDictionary(e => e.ExpertKey, StringComparer.Ordinal);
        var lines = members.Select(m =>
        {
            var w = byKey[ScoringService.ExpertKeyOf(m.ExternalKey, m.Email)];
            return new MemberWeight(m.Id, m.PanelCode, w.ExpertKey, w.N, w.PooledScaledError, w.ShrunkError, w.Weight);
        }).ToList();
        return new PanelWeights(panelId, asOf, measure, known.Count, set.PoolMeanError, k, lines);
    }
}
