using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Indicators;

public sealed record IndicatorInput(string? Key, string? Name, string? UnitLabel, int? Decimals, string? Description);

public sealed record ObservationInput(string? Period, double? Value, string? Source, DateOnly? ObservedOn);

/// <summary>A point of an indicator's reference series.</summary>
public sealed record SeriesPoint(string Period, double Value);

/// <summary>Indicators and their observations, with correction history (<see cref="ObservationHistory"/>).</summary>
public sealed class IndicatorCatalog(PanelRoundDbContext db, TimeProvider clock)
{
    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private DateOnly Today => DateOnly.FromDateTime(Now);

    public async Task<Result<Indicator>> CreateIndicatorAsync(IndicatorInput input, string actor)
    {
        var errors = new FieldErrors();
        var key = errors.Required("key", input.Key, FieldLengths.IndicatorKey, "Key").ToLowerInvariant();
        if (key.Length > 0 && !IndicatorKeys.IsWellFormed(key))
        {
            errors.Add("key", "Key uses lower-case letters, digits and dashes, e.g. apt-price-old-harbour.");
        }
        var name = errors.Required("name", input.Name, FieldLengths.Title, "Name");
        var unit = errors.Required("unitLabel", input.UnitLabel, FieldLengths.UnitLabel, "Unit");
        var decimals = input.Decimals ?? 0;
        if (decimals is < 0 or > 6)
        {
            errors.Add("decimals", "Decimals is 0 to 6.");
        }
        var description = errors.Optional("description", input.Description, FieldLengths.Description, "Description");
        if (key.Length > 0 && await db.Indicators.AnyAsync(i => i.Key == key))
        {
            errors.Add("key", $"An indicator with key '{key}' exists already.");
        }
        if (errors.Any)
        {
            return Result<Indicator>.Invalid(errors);
        }
        var indicator = new Indicator { Key = key, Name = name, UnitLabel = unit, Decimals = decimals, Description = description, CreatedAt = Now };
        db.Indicators.Add(indicator);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "indicator.created", "Indicator", indicator.Id, details: new { indicator.Key, indicator.Name });
        await db.SaveChangesAsync();
        return Result<Indicator>.Ok(indicator);
    }


    /// <summary>
    /// Records observations all-or-nothing. A value for a period that has one already is a
    /// correction: the old row is marked superseded (history kept) and the change is audited.
    /// </summary>
    /// <remarks>
    /// Values are finite with |v| ≤ 10¹² (<see cref="Numbers.MaxMagnitude"/>); the day a value became
    /// known (<c>observedOn</c>), when given, lies between the period's end and today.
    /// </remarks>
    public async Task<Result<ObservationImportResult>> RecordObservationsAsync(int indicatorId, IReadOnlyList<ObservationInput> inputs, string actor, string fieldPrefix = "observations")
    {
        var indicator = await db.Indicators.FirstOrDefaultAsync(i => i.Id == indicatorId);
        if (indicator is null)
        {
            return Result<ObservationImportResult>.NotFound($"Indicator {indicatorId} does not exist.");
        }
        var errors = new FieldErrors();
        if (inputs.Count == 0)
        {
            errors.Add(fieldPrefix, "Give at least one observation.");
        }
        var parsed = new List<ObservationEntry>();
        var seen = new HashSet<Period>();
        for (var i = 0; i < inputs.Count; i++)
        {
            var o = inputs[i];
            var at = $"{fieldPrefix}[{i}]";
            if (o is null)
            {
                errors.Add(at, "An observation is missing (null).");
                continue;
            }
            if (!Period.TryParse(o.Period, out var period))
            {
                errors.Add($"{at}.period", $"'{o.Period}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            else if (!seen.Add(period.Value))
            {
                errors.Add($"{at}.period", $"{period} appears twice.");
            }
            if (o.Value is not { } v || !double.IsFinite(v))
            {
                errors.Add($"{at}.value", "Value must be a number.");
            }
            else if (!Numbers.InBounds(v))
            {
                errors.Add($"{at}.value", "Value " + Numbers.OutOfBoundsMessage);
            }
            if (ObservationDates.ObservedOnError(period, o.ObservedOn, Today) is { } dateError)
            {
                errors.Add($"{at}.observedOn", dateError);
            }
            var source = errors.Optional($"{at}.source", o.Source, FieldLengths.Source, "Source");
            if (period is { } p && o.Value is { } value && Numbers.InBounds(value))
            {
                parsed.Add(new ObservationEntry(p, value, source, o.ObservedOn));
            }
        }
        if (errors.Any)
        {
            return Result<ObservationImportResult>.Invalid(errors);
        }
        var result = await ObservationHistory.RecordAsync(db, indicator, parsed, actor, Now);
        await db.SaveChangesAsync();
        return Result<ObservationImportResult>.Ok(result);
    }

    /// <summary>The current observations of an indicator, oldest first.</summary>
    public static async Task<IReadOnlyList<Observation>> CurrentObservationsAsync(PanelRoundDbContext db, int indicatorId) =>
        await db.Observations.AsNoTracking()
            .Where(o => o.IndicatorId == indicatorId && o.SupersededAt == null)
            .OrderBy(o => o.PeriodSortKey).ToListAsync();

    /// <summary>
    /// The reference series of several indicators in one query: their current observations whose
    /// period ended before <paramref name="startsOn"/> (a panel's start), oldest first, by indicator id.
    /// </summary>
    public static async Task<ILookup<int, SeriesPoint>> ReferenceSeriesAsync(PanelRoundDbContext db, IReadOnlyCollection<int> indicatorIds, DateOnly startsOn) =>
        (await db.Observations.AsNoTracking()
            .Where(o => indicatorIds.Contains(o.IndicatorId) && o.SupersededAt == null).OrderBy(o => o.PeriodSortKey).ToListAsync())
        .Where(o => Period.Parse(o.Period).EndDate < startsOn)
        .ToLookup(o => o.IndicatorId, o => new SeriesPoint(o.Period, o.Value));
}
