using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Application.Scoring;

/// <summary>An outcome as entered: the indicator (by key), the target period, the value, a source note and the day it became known.</summary>
public sealed record OutcomeInput(string? Indicator, string? Period, double? Value, string? Source, DateOnly? ObservedOn);

/// <summary>
/// Records outcomes: an outcome is the observation of an indicator at a period, so this goes
/// through the catalog's observation recording (a value for a period that has one is a
/// correction: history kept, audited as <c>observation.corrected</c>). Several indicators at
/// once are all-or-nothing in one transaction. An outcome is of a period that has ended; the day it
/// became known (<c>observedOn</c>) lies between the period's end and today; values are within
/// ±10¹² (<see cref="Figures.MaxMagnitude"/>).
/// </summary>
public sealed class OutcomeRecorder(PanelRoundDbContext db, Catalog catalog, TimeProvider clock)
{
    /// <summary>Records one outcome from the form; errors are keyed by field (indicator, period, value, source, observedOn).</summary>
    public Task<Outcome<ObservationImportResult>> RecordAsync(OutcomeInput input, string actor) =>
        RecordAsync([input], actor, (_, field) => field);

    /// <summary>Reads outcome rows from CSV (columns <c>indicator</c>, <c>period</c>, <c>value</c>, optional <c>source</c>, <c>observed_on</c>) and records them all or none.</summary>
    public async Task<Outcome<ObservationImportResult>> ImportCsvAsync(Stream csv, string actor)
    {
        var errors = new FieldErrors();
        var table = ReadCsv(csv, errors);
        if (table is null)
        {
            return Outcome<ObservationImportResult>.Invalid(errors);
        }
        foreach (var required in new[] { "indicator", "period", "value" })
        {
            if (!table.Headers.Contains(required))
            {
                errors.Add("file", $"The header row has no '{required}' column (needed: indicator, period, value; optional: source, observed_on).");
            }
        }
        if (table.Rows.Count == 0)
        {
            errors.Add("file", "The file has no data rows.");
        }
        if (errors.Any)
        {
            return Outcome<ObservationImportResult>.Invalid(errors);
        }
        var inputs = new List<OutcomeInput>();
        var rowNumbers = new List<int>();
        foreach (var r in table.Rows)
        {
            var value = ParseNumber(r["value"], out var badValue);
            if (badValue is not null)
            {
                errors.Add(CsvRowKey(null, r.Row), $"Row {r.Row} (line {r.Line}): value {badValue}");
            }
            var observedOn = ParseDate(r["observed_on"], out var badDate);
            if (badDate)
            {
                errors.Add(CsvRowKey(null, r.Row), $"Row {r.Row} (line {r.Line}): observed_on '{r["observed_on"]}' is not a date (yyyy-MM-dd).");
            }
            inputs.Add(new OutcomeInput(r["indicator"], r["period"], value, r["source"], observedOn));
            rowNumbers.Add(r.Row);
        }
        if (errors.Any)
        {
            return Outcome<ObservationImportResult>.Invalid(errors);
        }
        return await RecordAsync(inputs, actor, (i, _) => CsvRowKey(null, rowNumbers[i]));
    }

    private async Task<Outcome<ObservationImportResult>> RecordAsync(IReadOnlyList<OutcomeInput> inputs, string actor, Func<int, string, string> keyOf)
    {
        var errors = new FieldErrors();
        var today = DateOnly.FromDateTime(clock.GetUtcNow().UtcDateTime);
        var keys = inputs.Select(i => i.Indicator?.Trim().ToLowerInvariant()).Where(k => !string.IsNullOrEmpty(k)).Distinct().ToList();
        var indicators = await db.Indicators.AsNoTracking().Where(i => keys.Contains(i.Key)).ToDictionaryAsync(i => i.Key, i => i.Id);
        var groups = new Dictionary<int, List<ObservationInput>>();
        var seen = new HashSet<(int, Period)>();
        for (var i = 0; i < inputs.Count; i++)
        {
            var o = inputs[i];
            var key = o.Indicator?.Trim().ToLowerInvariant();
            var label = inputs.Count == 1 ? "" : $"Row {keyOf(i, "").Replace("row ", "", StringComparison.Ordinal)}: ";
            int? indicatorId = null;
            if (string.IsNullOrEmpty(key))
            {
                errors.Add(keyOf(i, "indicator"), label + "Choose the indicator.");
            }
            else if (!indicators.TryGetValue(key, out var id))
            {
                errors.Add(keyOf(i, "indicator"), label + $"There is no indicator with key '{key}'.");
            }
            else
            {
                indicatorId = id;
            }
            if (!Period.TryParse(o.Period, out var period))
            {
                errors.Add(keyOf(i, "period"), label + $"'{o.Period}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            else if (period.Value.EndDate >= today)
            {
                errors.Add(keyOf(i, "period"), label + $"{period} has not ended yet (it ends on {period.Value.EndDate:yyyy-MM-dd}): its outcome cannot be known.");
            }
            else if (indicatorId is { } ind && !seen.Add((ind, period.Value)))
            {
                errors.Add(keyOf(i, "period"), label + $"{key} {period} appears twice.");
            }
            if (o.Value is not { } v || !double.IsFinite(v))
            {
                errors.Add(keyOf(i, "value"), label + "The value must be a number.");
            }
            else if (!Figures.InBounds(v))
            {
                errors.Add(keyOf(i, "value"), label + "The value " + Figures.OutOfBoundsMessage);
            }
            if (Catalog.ObservedOnError(period, o.ObservedOn, today) is { } dateError)
            {
                errors.Add(keyOf(i, "observedOn"), label + dateError);
            }
            if (o.Source?.Trim().Length > 500)
            {
                errors.Add(keyOf(i, "source"), label + "The source note is at most 500 characters.");
            }
            if (indicatorId is { } indicator && period is { } p)
            {
                if (!groups.TryGetValue(indicator, out var list))
                {
                    groups[indicator] = list = [];
                }
                list.Add(new ObservationInput(p.ToString(), o.Value, o.Source, o.ObservedOn));
            }
        }
        if (errors.Any)
        {
            return Outcome<ObservationImportResult>.Invalid(errors);
        }
        await using var tx = await db.Database.BeginTransactionAsync();
        int added = 0, corrected = 0, unchanged = 0;
        foreach (var (indicatorId, list) in groups)
        {
            var result = await catalog.RecordObservationsAsync(indicatorId, list, actor);
            if (!result.IsOk)
            {
                await tx.RollbackAsync();
                db.ChangeTracker.Clear();
                return result;
            }
            (added, corrected, unchanged) = (added + result.Value!.Added, corrected + result.Value.Corrected, unchanged + result.Value.Unchanged);
        }
        await tx.CommitAsync();
        return Outcome<ObservationImportResult>.Ok(new ObservationImportResult(added, corrected, unchanged));
    }

    /// <summary>
    /// Reads an uploaded CSV file for an import (<see cref="CsvFiles.Read(Stream)"/>: strict RFC 4180
    /// UTF-8). When it cannot be read, adds every error (keyed like the imports' row errors: <c>row 3</c>,
    /// or <c>forecasts row 3</c> for a named file; the file's own key for the header) and returns null.
    /// </summary>
    /// <param name="csv">The uploaded file.</param>
    /// <param name="errors">Where the file's errors go.</param>
    /// <param name="file">The upload's field name (<c>forecasts</c>), or null for an import of one file (keyed <c>file</c>).</param>
    internal static CsvTable? ReadCsv(Stream csv, FieldErrors errors, string? file = null)
    {
        var table = CsvFiles.Read(csv);
        foreach (var e in table.Errors)
        {
            errors.Add(e.Row == 0 ? file ?? "file" : CsvRowKey(file, e.Row), e.Message);
        }
        return table.IsValid ? table : null;
    }

    /// <summary>The error key of a row of an uploaded CSV file: <c>row 3</c>, or <c>forecasts row 3</c> for a named file.</summary>
    internal static string CsvRowKey(string? file, int row) => file is null ? $"row {row}" : $"{file} row {row}";

    /// <summary>
    /// Reads a number of a CSV file by the one rule for machine-written numbers (<see cref="Core.Domain.Numbers.TryParseInvariant"/>): invariant culture, an optional sign, digits with an
    /// optional dot and decimals, an optional exponent (<c>e</c> or <c>E</c>, optional sign, digits); no
    /// thousands separators, no NaN or infinity. The magnitude is at most
    /// <see cref="Figures.MaxMagnitude"/>, and a number whose digits are not all zero may not underflow
    /// to zero or to a subnormal double (below 2.2e-308 in magnitude), which would store another value.
    /// </summary>
    /// <returns>The value; null when the field is empty (no error) or wrong (then <paramref name="error"/> says why, to follow the column's name).</returns>
    public static double? ParseNumber(string? text, out string? error)
    {
        error = null;
        if (text is null)
        {
            return null;
        }
        var reading = Core.Domain.Numbers.TryParseInvariant(text);
        error = reading.Error;
        return reading.IsValid ? reading.Value : null;
    }

    internal static DateOnly? ParseDate(string? text, out bool bad)
    {
        bad = false;
        if (text is null)
        {
            return null;
        }
        if (DateOnly.TryParseExact(text, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var date))
        {
            return date;
        }
        bad = true;
        return null;
    }
}
