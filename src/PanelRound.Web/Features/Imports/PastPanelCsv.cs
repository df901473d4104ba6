using System.Globalization;
using PanelRound.Core.Domain;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Imports;

/// <summary>A forecast of a past panel as read from the <c>forecasts</c> file.</summary>
/// <param name="Row">The 1-based data row.</param>
/// <param name="Panel">The panel's key.</param>
/// <param name="PanelStart">The panel's start.</param>
/// <param name="PanelClosed">The day it concluded, when given (on this row or an earlier one of the panel).</param>
/// <param name="Indicator">The indicator's key, lower-cased.</param>
/// <param name="Unit">The indicator's unit.</param>
/// <param name="Period">The target period.</param>
/// <param name="Expert">The expert's key.</param>
/// <param name="Round">The round.</param>
/// <param name="Value">A Point forecast.</param>
/// <param name="P10">A Range forecast's P10.</param>
/// <param name="P50">Its P50.</param>
/// <param name="P90">Its P90.</param>
/// <param name="Calibration">True when the optional <c>calibration</c> column is 1: the question was a calibration question.</param>
public sealed record PastForecastRow(
    int Row, string Panel, DateOnly PanelStart, DateOnly? PanelClosed, string Indicator, string Unit, Period Period, string Expert, int Round,
    double? Value, double? P10, double? P50, double? P90, bool Calibration = false)
{
    public bool IsRange => P10 is not null;
}

/// <summary>An observation as read from the <c>observations</c> file, with the day it counts as known and the decimals it was written with (at most 4).</summary>
public sealed record PastObservationRow(int Row, string Indicator, Period Period, double Value, string? Source, DateOnly? ObservedOn, int Decimals);

/// <summary>The rows of both files of an import of past panels, every row valid on its own and with the rows before it.</summary>
public sealed record PastPanelRows(IReadOnlyList<PastForecastRow> Forecasts, IReadOnlyList<PastObservationRow> Observations);

/// <summary>The row errors of an import: the first <see cref="MaxReported"/> are kept, the rest counted.</summary>
public sealed class RowErrorReport
{
    /// <summary>The most row errors reported; the rest are counted.</summary>
    public const int MaxReported = 200;

    private readonly FieldErrors _errors = new();

    /// <summary>How many errors were added, reported or not.</summary>
    public int Count { get; private set; }

    public void Add(string key, string message)
    {
        Count++;
        if (Count <= MaxReported)
        {
            _errors.Add(key, message);
        }
    }

    /// <summary>The reported errors, with a line under <c>file</c> counting them all when some were left out.</summary>
    public FieldErrors ToFieldErrors()
    {
        if (Count > MaxReported)
        {
            _errors.Add("file", $"{Count} errors in all; the first {MaxReported} are listed.");
        }
        return _errors;
    }
}

/// <summary>
/// Reads the two files of an import of past panels (<see cref="PastPanelImport"/> documents the
/// columns) into rows, or row errors keyed <c>forecasts row 3</c> / <c>observations row 3</c> (the
/// file's own key for its header). Every rule that needs no database is checked here: each field,
/// and across rows one start per panel, one unit per indicator, one format per question, no
/// duplicates. Pure: no database, no clock (today is given).
/// </summary>
public static class PastPanelCsv
{
    /// <summary>The columns the forecasts file must have, besides value or p10, p50 and p90 (optional: panel_closed, calibration).</summary>
    public static readonly IReadOnlyList<string> ForecastColumns = ["panel", "panel_start", "indicator", "unit", "target_period", "expert", "round"];

    /// <summary>The columns the observations file must have; source and observed_on are optional.</summary>
    public static readonly IReadOnlyList<string> ObservationColumns = ["indicator", "period", "value"];

    /// <summary>Reads both files; the rows, or every row error of both.</summary>
    /// <param name="forecasts">The forecasts file.</param>
    /// <param name="observations">The observations file, if any.</param>
    /// <param name="today">Today: an observation is known at the latest today.</param>
    /// <param name="lagDays">The publication lag assumed for observations without <c>observed_on</c> (<see cref="ObservationDates.AssumedObservedOn"/>).</param>
    public static Result<PastPanelRows> Parse(Stream forecasts, Stream? observations, DateOnly today, int lagDays)
    {
        var report = new RowErrorReport();
        var forecastRows = ParseForecasts(forecasts, report);
        var observationRows = observations is null ? [] : ParseObservations(observations, report, today, lagDays);
        return report.Count > 0 || forecastRows is null || observationRows is null
            ? Result<PastPanelRows>.Invalid(report.ToFieldErrors())
            : Result<PastPanelRows>.Ok(new PastPanelRows(forecastRows, observationRows));
    }

    /// <summary>Reads one of the files as every CSV import does; its errors go to the report.</summary>
    private static CsvTable? ReadCsv(Stream stream, string file, RowErrorReport report)
    {
        var errors = new FieldErrors();
        var table = CsvUploads.Read(stream, errors, file);
        foreach (var (key, messages) in errors.ToDictionary())
        {
            foreach (var message in messages)
            {
                report.Add(key, message);
            }
        }
        return table;
    }

    private static List<PastForecastRow>? ParseForecasts(Stream stream, RowErrorReport report)
    {
        var table = ReadCsv(stream, "forecasts", report);
        if (table is null)
        {
            return null;
        }
        var (headers, rows) = (table.Headers, table.Rows);
        var missing = ForecastColumns.Where(c => !headers.Contains(c)).ToList();
        var hasValue = headers.Contains("value");
        var hasRange = headers.Contains("p10") && headers.Contains("p50") && headers.Contains("p90");
        if (missing.Count > 0)
        {
            report.Add("forecasts", "The header row lacks " + string.Join(", ", missing) + ".");
        }
        if (!hasValue && !hasRange)
        {
            report.Add("forecasts", "The header row needs a 'value' column or the columns 'p10', 'p50' and 'p90'.");
        }
        if (rows.Count == 0)
        {
            report.Add("forecasts", "The file has no data rows.");
        }
        if (report.Count > 0)
        {
            return null;
        }

        var result = new List<PastForecastRow>(rows.Count);
        var panelStarts = new Dictionary<string, (DateOnly Start, DateOnly? Closed)>(StringComparer.Ordinal);
        var units = new Dictionary<string, string>(StringComparer.Ordinal);
        var formats = new Dictionary<(string, string), bool>();
        var kinds = new Dictionary<(string, string), (bool Calibration, Period Period)>();
        var seen = new HashSet<(string, string, Period, string, int)>();
        var panelPeriods = new Dictionary<string, HashSet<Period>>(StringComparer.Ordinal);
        foreach (var r in rows)
        {
            var key = CsvUploads.RowKey("forecasts", r.Row);
            var before = report.Count;
            void Error(string message) => report.Add(key, $"Row {r.Row} (line {r.Line}): {message}");

            var panel = r["panel"];
            if (panel is null)
            {
                Error("panel is empty.");
            }
            else if (panel.Length > FieldLengths.ExternalKey)
            {
                Error($"panel is at most {FieldLengths.ExternalKey} characters.");
            }
            var start = CsvUploads.ParseDate(r["panel_start"], out _);
            if (start is null)
            {
                Error($"panel_start '{r["panel_start"]}' is not a date (yyyy-MM-dd).");
            }
            var closed = CsvUploads.ParseDate(r["panel_closed"], out var badClosed);
            if (badClosed)
            {
                Error($"panel_closed '{r["panel_closed"]}' is not a date (yyyy-MM-dd).");
            }
            else if (closed < start)
            {
                Error("panel_closed is before panel_start.");
            }
            var indicator = r["indicator"]?.ToLowerInvariant();
            if (indicator is null || indicator.Length > FieldLengths.IndicatorKey || !IndicatorKeys.IsWellFormed(indicator))
            {
                Error($"indicator '{r["indicator"]}' is not a key (lower-case letters, digits and dashes, e.g. apt-price-old-harbour).");
                indicator = null;
            }
            var unit = r["unit"];
            if (unit is null || unit.Length > FieldLengths.UnitLabel)
            {
                Error($"unit is empty or longer than {FieldLengths.UnitLabel} characters.");
            }
            var calibrationText = r["calibration"];
            var calibration = calibrationText is "1";
            if (calibrationText is not (null or "0" or "1"))
            {
                Error($"calibration '{calibrationText}' is 0 or 1 (1: a calibration question, whose true value is the indicator's observation at the target period).");
            }
            if (!Period.TryParse(r["target_period"], out var period))
            {
                Error($"target_period '{r["target_period"]}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            // A calibration question usually asks about a period that has just ended, before the panel's start.
            else if (!calibration && start is { } s && period.Value.EndDate < s)
            {
                Error($"target_period {period} ends before panel_start {s:yyyy-MM-dd}: a target period lies after the panel's start.");
            }
            var expert = r["expert"];
            if (expert is null || expert.Length > FieldLengths.ExternalKey)
            {
                Error($"expert is empty or longer than {FieldLengths.ExternalKey} characters.");
            }
            if (!int.TryParse(r["round"], NumberStyles.None, CultureInfo.InvariantCulture, out var round) || round is < 1 or > 50)
            {
                Error($"round '{r["round"]}' is not a round number (1, 2, ...).");
            }
            var value = CsvUploads.ParseNumber(r["value"], out var badValue);
            var p10 = CsvUploads.ParseNumber(r["p10"], out var bad10);
            var p50 = CsvUploads.ParseNumber(r["p50"], out var bad50);
            var p90 = CsvUploads.ParseNumber(r["p90"], out var bad90);
            var badNumbers = new[] { ("value", badValue), ("p10", bad10), ("p50", bad50), ("p90", bad90) }.Where(b => b.Item2 is not null).ToList();
            foreach (var (name, bad) in badNumbers)
            {
                Error($"{name} {bad}");
            }
            if (badNumbers.Count == 0)
            {
                var parts = (p10 is null ? 0 : 1) + (p50 is null ? 0 : 1) + (p90 is null ? 0 : 1);
                if (value is not null && parts > 0)
                {
                    Error("give either value or p10, p50 and p90, not both.");
                }
                else if (value is null && parts != 3)
                {
                    Error("give value, or all of p10, p50 and p90.");
                }
                else if (parts == 3 && !(p10 <= p50 && p50 <= p90))
                {
                    Error("the range must satisfy p10 <= p50 <= p90.");
                }
                else if (calibration && parts != 3)
                {
                    Error("a calibration question is answered with a range: give p10, p50 and p90.");
                }
            }
            if (report.Count > before)
            {
                continue;
            }

            // Cross-row rules: one start per panel, one unit per indicator, one format per question, no duplicates.
            if (panelStarts.TryGetValue(panel!, out var known))
            {
                if (known.Start != start || (closed is not null && known.Closed != closed))
                {
                    Error($"panel '{panel}' has another panel_start or panel_closed on an earlier row.");
                }
            }
            else
            {
                panelStarts[panel!] = (start!.Value, closed);
            }
            if (units.TryGetValue(indicator!, out var knownUnit) && !string.Equals(knownUnit, unit, StringComparison.Ordinal))
            {
                Error($"indicator '{indicator}' has unit '{knownUnit}' on an earlier row.");
            }
            units.TryAdd(indicator!, unit!);
            var isRange = value is null;
            if (formats.TryGetValue((panel!, indicator!), out var wasRange) && wasRange != isRange)
            {
                Error($"panel '{panel}' asks about '{indicator}' with {(wasRange ? "ranges (p10, p50, p90)" : "single values")} on earlier rows; one question has one response format.");
            }
            formats.TryAdd((panel!, indicator!), isRange);
            if (kinds.TryGetValue((panel!, indicator!), out var known2))
            {
                if (known2.Calibration != calibration)
                {
                    Error($"panel '{panel}' asks about '{indicator}' with calibration {(known2.Calibration ? 1 : 0)} on earlier rows; one question is a calibration question or not.");
                }
                else if (calibration && known2.Period != period!.Value)
                {
                    Error($"panel '{panel}' has calibration question '{indicator}' about {known2.Period} on earlier rows; a calibration question asks about one period.");
                }
            }
            kinds.TryAdd((panel!, indicator!), (calibration, period!.Value));
            if (!seen.Add((panel!, indicator!, period!.Value, expert!, round)))
            {
                Error($"expert '{expert}' has another forecast of {indicator} {period} in round {round} of panel '{panel}'.");
            }
            if (!panelPeriods.TryGetValue(panel!, out var periods))
            {
                panelPeriods[panel!] = periods = [];
            }
            if (periods.Add(period.Value) && periods.Count > 60)
            {
                Error($"panel '{panel}' has more than 60 target periods.");
            }
            if (report.Count > before)
            {
                continue;
            }
            result.Add(new PastForecastRow(r.Row, panel!, start!.Value, closed ?? panelStarts[panel!].Closed, indicator!, unit!, period.Value, expert!, round,
                value, isRange ? p10 : null, isRange ? p50 : null, isRange ? p90 : null, calibration));
        }
        return result;
    }

    private static List<PastObservationRow>? ParseObservations(Stream stream, RowErrorReport report, DateOnly today, int lagDays)
    {
        var table = ReadCsv(stream, "observations", report);
        if (table is null)
        {
            return null;
        }
        var (headers, rows) = (table.Headers, table.Rows);
        var missing = ObservationColumns.Where(c => !headers.Contains(c)).ToList();
        if (missing.Count > 0)
        {
            report.Add("observations", "The header row lacks " + string.Join(", ", missing) + " (optional: source, observed_on).");
            return null;
        }
        var result = new List<PastObservationRow>(rows.Count);
        var seen = new HashSet<(string, Period)>();
        foreach (var r in rows)
        {
            var key = CsvUploads.RowKey("observations", r.Row);
            var before = report.Count;
            void Error(string message) => report.Add(key, $"Row {r.Row} (line {r.Line}): {message}");
            var indicator = r["indicator"]?.ToLowerInvariant();
            if (indicator is null || !IndicatorKeys.IsWellFormed(indicator))
            {
                Error($"indicator '{r["indicator"]}' is not a key (lower-case letters, digits and dashes).");
            }
            if (!Period.TryParse(r["period"], out var period))
            {
                Error($"period '{r["period"]}' is not a period: write a year such as 2024 or a quarter such as 2024Q3.");
            }
            var value = CsvUploads.ParseNumber(r["value"], out var badValue);
            if (badValue is not null)
            {
                Error($"value {badValue}");
            }
            else if (value is null)
            {
                Error("value is empty.");
            }
            var source = r["source"];
            if (source?.Length > FieldLengths.Source)
            {
                Error($"source is at most {FieldLengths.Source} characters.");
            }
            var observedOn = CsvUploads.ParseDate(r["observed_on"], out var badDate);
            if (badDate)
            {
                Error($"observed_on '{r["observed_on"]}' is not a date (yyyy-MM-dd).");
            }
            else if (ObservationDates.ObservedOnError(period, observedOn, today) is { } dateError)
            {
                Error("observed_on: " + dateError);
            }
            if (report.Count > before)
            {
                continue;
            }
            if (!seen.Add((indicator!, period!.Value)))
            {
                Error($"{indicator} {period} appears twice.");
                continue;
            }
            var text = r["value"]!;
            var dot = text.IndexOf('.', StringComparison.Ordinal);
            var decimals = dot < 0 || text.Contains('e', StringComparison.OrdinalIgnoreCase) ? 0 : Math.Min(4, text.Length - dot - 1);
            // Without observed_on, a value counts as published a usual lag after its period ended (at the latest today).
            observedOn ??= ObservationDates.AssumedObservedOn(period.Value, lagDays, today);
            result.Add(new PastObservationRow(r.Row, indicator!, period.Value, value!.Value, source, observedOn, decimals));
        }
        return result;
    }
}
