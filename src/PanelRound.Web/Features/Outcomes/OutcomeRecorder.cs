using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Outcomes;

/// <summary>An outcome as entered: the indicator (by key), the target period, the value, a source note and the day it became known.</summary>
public sealed record OutcomeInput(string? Indicator, string? Period, double? Value, string? Source, DateOnly? ObservedOn);

/// <summary>
/// Records outcomes: an outcome is the observation of an indicator at a period, so this goes
/// through the catalog's observation recording (a value for a period that has one is a
/// correction: history kept, audited as <c>observation.corrected</c>). Several indicators at
/// once are all-or-nothing in one transaction. An outcome is of a period that has ended; the day it
/// became known (<c>observedOn</c>) lies between the period's end and today; values are within
/// ±10¹² (<see cref="Numbers.MaxMagnitude"/>).
/// </summary>
public sealed class OutcomeRecorder(PanelRoundDbContext db, IndicatorCatalog catalog, TimeProvider clock)
{
    /// <summary>Records one outcome from the form; errors are keyed by field (indicator, period, value, source, observedOn).</summary>
    public Task<Result<ObservationImportResult>> RecordAsync(OutcomeInput input, string actor) =>
        RecordAsync([input], actor, (_, field) => field);

    /// <summary>Reads outcome rows from CSV (columns <c>indicator</c>, <c>period</c>, <c>value</c>, optional <c>source</c>, <c>observed_on</c>) and records them all or none.</summary>
    public async Task<Result<ObservationImportResult>> ImportCsvAsync(Stream csv, string actor)
    {
        var errors = new FieldErrors();
        var table = CsvUploads.Read(csv, errors);
        if (table is null)
        {
            return Result<ObservationImportResult>.Invalid(errors);
        }
        CsvUploads.RequireColumns(table, errors, ["indicator", "period", "value"], "source, observed_on");
        if (table.Rows.Count == 0)
        {
            errors.Add("file", "The file has no data rows.");
        }
        if (errors.Any)
        {
            return Result<ObservationImportResult>.Invalid(errors);
        }
        var inputs = new List<OutcomeInput>();
        var rowNumbers = new List<int>();
        foreach (var r in table.Rows)
        {
            var (value, observedOn) = CsvUploads.ReadValueAndObservedOn(r, errors);
            inputs.Add(new OutcomeInput(r["indicator"], r["period"], value, r["source"], observedOn));
            rowNumbers.Add(r.Row);
        }
        if (errors.Any)
        {
            return Result<ObservationImportResult>.Invalid(errors);
        }
        return await RecordAsync(inputs, actor, (i, _) => CsvUploads.RowKey(null, rowNumbers[i]));
    }

    private async Task<Result<ObservationImportResult>> RecordAsync(IReadOnlyList<OutcomeInput> inputs, string actor, Func<int, string, string> keyOf)
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
            else if (!Numbers.InBounds(v))
            {
                errors.Add(keyOf(i, "value"), label + "The value " + Numbers.OutOfBoundsMessage);
            }
            if (ObservationDates.ObservedOnError(period, o.ObservedOn, today) is { } dateError)
            {
                errors.Add(keyOf(i, "observedOn"), label + dateError);
            }
            if (o.Source?.Trim().Length > FieldLengths.Source)
            {
                errors.Add(keyOf(i, "source"), label + $"The source note is at most {FieldLengths.Source} characters.");
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
            return Result<ObservationImportResult>.Invalid(errors);
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
        return Result<ObservationImportResult>.Ok(new ObservationImportResult(added, corrected, unchanged));
    }
}
