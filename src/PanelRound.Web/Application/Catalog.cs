using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Application.Scoring;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Application;

public sealed record IndicatorInput(string? Key, string? Name, string? UnitLabel, int? Decimals, string? Description);

public sealed record ObservationInput(string? Period, double? Value, string? Source, DateOnly? ObservedOn);

public sealed record ExpertInput(string? Name, string? Email, string? Affiliation, string? Expertise, string? DeclaredInterests, string? ExternalKey = null);

/// <summary>Indicators, their observations (with correction history) and the expert roster.</summary>
public sealed class Catalog(PanelRoundDbContext db, TimeProvider clock)
{
    public async Task<Outcome<Indicator>> CreateIndicatorAsync(IndicatorInput input, string actor)
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
            return Outcome<Indicator>.Invalid(errors);
        }
        var indicator = new Indicator { Key = key, Name = name, UnitLabel = unit, Decimals = decimals, Description = description, CreatedAt = Now };
        db.Indicators.Add(indicator);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "indicator.created", "Indicator", indicator.Id, details: new { indicator.Key, indicator.Name });
        await db.SaveChangesAsync();
        return Outcome<Indicator>.Ok(indicator);
    }

    /// <summary>
    /// Records observations all-or-nothing. A value for a period that has one already is a
    /// correction: the old row is marked superseded (history kept) and the change is audited.
    /// </summary>
    /// <remarks>
    /// Values are finite with |v| ≤ 10¹² (<see cref="Figures.MaxMagnitude"/>); the day a value became
    /// known (<c>observedOn</c>), when given, lies between the period's end and today.
    /// </remarks>
    public async Task<Outcome<ObservationImportResult>> RecordObservationsAsync(int indicatorId, IReadOnlyList<ObservationInput> inputs, string actor, string fieldPrefix = "observations")
    {
        var indicator = await db.Indicators.FirstOrDefaultAsync(i => i.Id == indicatorId);
        if (indicator is null)
        {
            return Outcome<ObservationImportResult>.NotFound($"Indicator {indicatorId} does not exist.");
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
            else if (!Figures.InBounds(v))
            {
                errors.Add($"{at}.value", "Value " + Figures.OutOfBoundsMessage);
            }
            if (ObservedOnError(period, o.ObservedOn, Today) is { } dateError)
            {
                errors.Add($"{at}.observedOn", dateError);
            }
            var source = errors.Optional($"{at}.source", o.Source, FieldLengths.Source, "Source");
            if (period is { } p && o.Value is { } value && Figures.InBounds(value))
            {
                parsed.Add(new ObservationEntry(p, value, source, o.ObservedOn));
            }
        }
        if (errors.Any)
        {
            return Outcome<ObservationImportResult>.Invalid(errors);
        }
        var result = await ObservationHistory.RecordAsync(db, indicator, parsed, actor, Now);
        await db.SaveChangesAsync();
        return Outcome<ObservationImportResult>.Ok(result);
    }

    /// <summary>
    /// Reads observation rows from CSV (columns <c>period</c>, <c>value</c>, optional <c>source</c>,
    /// <c>observed_on</c>) as the other imports do (<see cref="CsvUploads"/>); errors are keyed by row (<c>row 3</c>).
    /// </summary>
    public static Outcome<IReadOnlyList<ObservationInput>> ParseObservationCsv(Stream csv)
    {
        var errors = new FieldErrors();
        var table = CsvUploads.Read(csv, errors);
        if (table is null || !CsvUploads.RequireColumns(table, errors, ["period", "value"], "source, observed_on"))
        {
            return Outcome<IReadOnlyList<ObservationInput>>.Invalid(errors);
        }
        var list = new List<ObservationInput>();
        foreach (var r in table.Rows)
        {
            var (value, observedOn) = CsvUploads.ReadValueAndObservedOn(r, errors);
            list.Add(new ObservationInput(r["period"], value, r["source"], observedOn));
        }
        return errors.Any ? Outcome<IReadOnlyList<ObservationInput>>.Invalid(errors) : Outcome<IReadOnlyList<ObservationInput>>.Ok(list);
    }

    public async Task<Outcome<Expert>> CreateExpertAsync(ExpertInput input, string actor)
    {
        var errors = new FieldErrors();
        var name = errors.Required("name", input.Name, FieldLengths.Name, "Name");
        var email = errors.Required("email", input.Email, FieldLengths.Email, "Email").ToLowerInvariant();
        if (email.Length > 0 && !MailAddresses.IsValid(email))
        {
            errors.Add("email", "Email is not an address mail can be sent to (one address such as name@firm.example; no spaces, no doubled, leading or trailing dots).");
        }
        if (email.Length > 0 && await db.Experts.AnyAsync(e => e.Email == email))
        {
            errors.Add("email", "An expert with this email is on the roster already.");
        }
        var externalKey = errors.Optional("externalKey", input.ExternalKey, FieldLengths.ExternalKey, "External key");
        if (externalKey is not null && await db.Experts.AnyAsync(e => e.ExternalKey == externalKey))
        {
            errors.Add("externalKey", "An expert with this external key is on the roster already.");
        }
        var expert = new Expert
        {
            Name = name, Email = email,
            Affiliation = errors.Optional("affiliation", input.Affiliation, FieldLengths.Affiliation, "Affiliation"),
            Expertise = errors.Optional("expertise", input.Expertise, FieldLengths.Expertise, "Expertise"),
            DeclaredInterests = errors.Optional("declaredInterests", input.DeclaredInterests, FieldLengths.DeclaredInterests, "Declared interests"),
            ExternalKey = externalKey, CreatedAt = Now,
        };
        if (errors.Any)
        {
            return Outcome<Expert>.Invalid(errors);
        }
        db.Experts.Add(expert);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "expert.created", "Expert", expert.Id);
        await db.SaveChangesAsync();
        return Outcome<Expert>.Ok(expert);
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

    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private DateOnly Today => DateOnly.FromDateTime(Now);

    /// <summary>
    /// Why a day cannot be the day a period's value became known, or null when it can (or is not
    /// given): a value is known at the earliest on the period's last day, and at the latest today.
    /// </summary>
    public static string? ObservedOnError(Period? period, DateOnly? observedOn, DateOnly today)
    {
        if (observedOn is not { } on)
        {
            return null;
        }
        if (period is { } p && on < p.EndDate)
        {
            return $"The value of {p} cannot be known on {on:yyyy-MM-dd}, before the period ends ({p.EndDate:yyyy-MM-dd}).";
        }
        return on > today ? $"The day it became known ({on:yyyy-MM-dd}) is after today ({today:yyyy-MM-dd})." : null;
    }
}
