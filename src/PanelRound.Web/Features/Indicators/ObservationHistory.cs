using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Indicators;

/// <summary>One observation to record: the period, the value, its source and the day it became known.</summary>
public sealed record ObservationEntry(Period Period, double Value, string? Source, DateOnly? ObservedOn);

/// <summary>How many observations were added, corrected and left unchanged.</summary>
public sealed record ObservationImportResult(int Added, int Corrected, int Unchanged);

/// <summary>
/// The correction rule of observations, the one place that writes them (the catalog, outcomes and
/// imports of past panels all record through it): a value for a period that has none is added; the
/// same value and source again changes nothing; anything else is a correction, which marks the
/// current row superseded (history kept), adds the new one and is audited as
/// <c>observation.corrected</c>. An indicator that gained values is audited once as
/// <c>observations.recorded</c>. The caller saves.
/// </summary>
public static class ObservationHistory
{
    /// <summary>Records the entries of one indicator (each period at most once) at <paramref name="now"/>.</summary>
    public static async Task<ObservationImportResult> RecordAsync(
        PanelRoundDbContext db, Indicator indicator, IReadOnlyList<ObservationEntry> entries, string actor, DateTime now)
    {
        var current = (await db.Observations.Where(o => o.IndicatorId == indicator.Id && o.SupersededAt == null).ToListAsync())
            .ToDictionary(o => o.Period);
        int added = 0, corrected = 0, unchanged = 0;
        foreach (var (period, value, source, observedOn) in entries)
        {
            var text = period.ToString();
            if (current.TryGetValue(text, out var old))
            {
                if (old.Value.Equals(value) && old.Source == source)
                {
                    unchanged++;
                    continue;
                }
                old.SupersededAt = now;
                corrected++;
                Audit.Record(db, actor, "observation.corrected", "Observation", $"{indicator.Key}/{text}",
                    details: new { indicator = indicator.Key, period = text, from = old.Value, to = value, oldSource = old.Source, source }, at: now);
            }
            else
            {
                added++;
            }
            db.Observations.Add(new Observation
            {
                IndicatorId = indicator.Id, Period = text, PeriodSortKey = period.SortKey, Value = value, Source = source,
                ObservedOn = observedOn, RecordedAt = now, RecordedBy = actor,
            });
        }
        if (added > 0)
        {
            Audit.Record(db, actor, "observations.recorded", "Indicator", indicator.Id, details: new { indicator = indicator.Key, added }, at: now);
        }
        return new ObservationImportResult(added, corrected, unchanged);
    }
}
