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

/// <summary>A question of a past panel as the forecasts file asks it: its indicator, its format and the target periods of its rows.</summary>
public sealed class PastQuestionPlan(string indicator, bool isRange, bool calibration, Period firstPeriod)
{
    public string Indicator { get; } = indicator;

    public bool IsRange { get; } = isRange;

    public bool Calibration { get; } = calibration;

    /// <summary>The target period of the question's first row (a calibration question has only this one).</summary>
    public Period FirstPeriod { get; } = firstPeriod;

    /// <summary>The target periods of its rows, in order.</summary>
    public SortedSet<Period> Periods { get; } = [];
}

/// <summary>A past panel as the forecasts file describes it: everything but its forecasts.</summary>
public sealed class PastPanelPlan(string key, DateOnly start, DateOnly? closed, int firstRow)
{
    private readonly Dictionary<string, PastQuestionPlan> _questions = new(StringComparer.Ordinal);
    private readonly HashSet<string> _experts = new(StringComparer.Ordinal);

    public string Key { get; } = key;

    public DateOnly Start { get; } = start;

    /// <summary>The day it concluded, as its first row gives it.</summary>
    public DateOnly? Closed { get; } = closed;

    /// <summary>The panel's first data row.</summary>
    public int FirstRow { get; } = firstRow;

    /// <summary>Its questions, one per indicator, in the order the file first names them.</summary>
    public List<PastQuestionPlan> Questions { get; } = [];

    /// <summary>Its experts, in the order the file first names them.</summary>
    public List<string> Experts { get; } = [];

    /// <summary>Its round numbers, in order.</summary>
    public SortedSet<int> Rounds { get; } = [];

    /// <summary>The target periods of its questions that are not calibration questions, in order.</summary>
    public SortedSet<Period> ForecastPeriods { get; } = [];

    /// <summary>The target periods of all its questions, in order.</summary>
    public SortedSet<Period> AllPeriods { get; } = [];

    /// <summary>The panel's target periods: those of its forecast questions, or of its calibration questions when it has only those.</summary>
    public IEnumerable<Period> TargetPeriods => ForecastPeriods.Count > 0 ? ForecastPeriods : AllPeriods;

    public PastQuestionPlan Question(string indicator) => _questions[indicator];

    internal void Add(PastForecastRow row)
    {
        if (!_questions.TryGetValue(row.Indicator, out var question))
        {
            _questions[row.Indicator] = question = new PastQuestionPlan(row.Indicator, row.IsRange, row.Calibration, row.Period);
            Questions.Add(question);
        }
        question.Periods.Add(row.Period);
        if (_experts.Add(row.Expert))
        {
            Experts.Add(row.Expert);
        }
        Rounds.Add(row.Round);
        AllPeriods.Add(row.Period);
        if (!row.Calibration)
        {
            ForecastPeriods.Add(row.Period);
        }
    }
}

/// <summary>
/// What a forecasts file holds apart from its forecasts: the panels with their questions, experts and
/// rounds, the indicators and the experts, each in the order the file first names it. Its size grows
/// with the number of panels and experts, not with the number of forecasts.
/// </summary>
public sealed class PastForecastSummary
{
    private readonly Dictionary<string, PastPanelPlan> _panels = new(StringComparer.Ordinal);
    private readonly HashSet<string> _indicators = new(StringComparer.Ordinal);
    private readonly HashSet<string> _experts = new(StringComparer.Ordinal);

    /// <summary>The panels, in the order of their first rows.</summary>
    public List<PastPanelPlan> Panels { get; } = [];

    /// <summary>The indicators with the unit and row of their first forecast.</summary>
    public List<(string Indicator, string Unit, int FirstRow)> Indicators { get; } = [];

    /// <summary>The experts' keys.</summary>
    public List<string> Experts { get; } = [];

    /// <summary>How many forecasts the file holds.</summary>
    public int Rows { get; private set; }

    public bool HasIndicator(string indicator) => _indicators.Contains(indicator);

    public void Add(PastForecastRow row)
    {
        Rows++;
        if (!_panels.TryGetValue(row.Panel, out var panel))
        {
            _panels[row.Panel] = panel = new PastPanelPlan(row.Panel, row.PanelStart, row.PanelClosed, row.Row);
            Panels.Add(panel);
        }
        panel.Add(row);
        if (_indicators.Add(row.Indicator))
        {
            Indicators.Add((row.Indicator, row.Unit, row.Row));
        }
        if (_experts.Add(row.Expert))
        {
            Experts.Add(row.Expert);
        }
    }
}

/// <summary>Both files of an import of past panels as read: the summary of the forecasts (the forecasts themselves are read again as they are stored) and the observations.</summary>
public sealed record PastPanelFiles(PastForecastSummary Forecasts, IReadOnlyList<PastObservationRow> Observations);

/// <summary>
/// Reads the two files of an import of past panels (<see cref="PastPanelImport"/> documents the
/// columns) into rows, or row errors keyed <c>forecasts row 3</c> / <c>observations row 3</c> (the
/// file's own key for its header). Every rule that needs no database is checked here: each field,
/// and across rows one start per panel, one unit per indicator, one format per question, no
/// duplicates. Pure: no database, no clock (today is given).
/// </summary>
/// <remarks>
/// The forecasts file is read a row at a time (<see cref="CsvFileReader"/>); what is kept of it is
/// the summary (<see cref="PastForecastSummary"/>), except that finding a forecast given twice
/// needs every key seen: <see cref="Read"/> does that only when asked, since the import finds
/// them in the database instead and asks only to report them.
/// </remarks>
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
        var rows = new List<PastForecastRow>();
        var read = Read(forecasts, observations, today, lagDays, findDuplicates: true, rows.Add);
        return read.IsOk ? Result<PastPanelRows>.Ok(new PastPanelRows(rows, read.Value!.Observations)) : read.As<PastPanelRows>();
    }

    /// <summary>
    /// Reads both files, the forecasts a row at a time: their summary and the observations, or every
    /// row error of both (the same errors as <see cref="Parse"/>, less forecasts given twice unless
    /// <paramref name="findDuplicates"/>).
    /// </summary>
    /// <param name="forecasts">The forecasts file.</param>
    /// <param name="observations">The observations file, if any.</param>
    /// <param name="today">Today: an observation is known at the latest today.</param>
    /// <param name="lagDays">The publication lag assumed for observations without <c>observed_on</c>.</param>
    /// <param name="findDuplicates">Whether to refuse a forecast given twice, which keeps a key of every forecast in memory.</param>
    /// <param name="onRow">Called with each valid forecast, in file order, before the file is known to be valid.</param>
    public static Result<PastPanelFiles> Read(
        Stream forecasts, Stream? observations, DateOnly today, int lagDays, bool findDuplicates, Action<PastForecastRow>? onRow = null)
    {
        var summary = new PastForecastSummary();
        var report = ReadForecasts(forecasts, new PastForecastChecker(findDuplicates), row =>
        {
            summary.Add(row);
            onRow?.Invoke(row);
        }, out var forecastsRead);
        var observationRows = observations is null ? [] : ParseObservations(observations, report, today, lagDays);
        return report.Count > 0 || !forecastsRead || observationRows is null
            ? Result<PastPanelFiles>.Invalid(report.ToFieldErrors())
            : Result<PastPanelFiles>.Ok(new PastPanelFiles(summary, observationRows));
    }

    /// <summary>The forecasts of a file that <see cref="Read"/> found valid, a row at a time, in file order.</summary>
    /// <exception cref="InvalidDataException">The file is not valid (it changed since it was read).</exception>
    public static IEnumerable<PastForecastRow> ForecastRows(Stream forecasts)
    {
        var reader = CsvFileReader.Open(forecasts);
        var checker = new PastForecastChecker(findDuplicates: false);
        var report = new RowErrorReport();
        foreach (var r in reader.ReadRows())
        {
            yield return checker.Check(r, report) ?? throw new InvalidDataException($"Forecasts row {r.Row} is not valid on a second reading.");
        }
        if (reader.Errors.Count > 0)
        {
            throw new InvalidDataException("The forecasts file is not valid on a second reading.");
        }
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

    /// <summary>
    /// Reads the forecasts file a row at a time, passing each valid row on. Returns the report to go on
    /// with: as if the whole file were read first, the errors of the file (CSV) come alone, then those
    /// of its header alone, else the rows' errors.
    /// </summary>
    private static RowErrorReport ReadForecasts(Stream stream, PastForecastChecker checker, Action<PastForecastRow> onRow, out bool read)
    {
        var reader = CsvFileReader.Open(stream);
        var headers = reader.Headers;
        var headerReport = new RowErrorReport();
        var missing = ForecastColumns.Where(c => !headers.Contains(c)).ToList();
        var hasValue = headers.Contains("value");
        var hasRange = headers.Contains("p10") && headers.Contains("p50") && headers.Contains("p90");
        if (missing.Count > 0)
        {
            headerReport.Add("forecasts", "The header row lacks " + string.Join(", ", missing) + ".");
        }
        if (!hasValue && !hasRange)
        {
            headerReport.Add("forecasts", "The header row needs a 'value' column or the columns 'p10', 'p50' and 'p90'.");
        }
        var rowReport = new RowErrorReport();
        var count = 0;
        foreach (var r in reader.ReadRows())
        {
            count++;
            if (headerReport.Count == 0 && checker.Check(r, rowReport) is { } row)
            {
                onRow(row);
            }
        }
        read = false;
        if (reader.Errors.Count > 0)
        {
            var fileReport = new RowErrorReport();
            foreach (var e in reader.Errors)
            {
                fileReport.Add(CsvUploads.ErrorKey("forecasts", e), e.Message);
            }
            return fileReport;
        }
        if (count == 0)
        {
            headerReport.Add("forecasts", "The file has no data rows.");
        }
        if (headerReport.Count > 0)
        {
            return headerReport;
        }
        read = true;
        return rowReport;
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

/// <summary>
/// Checks the rows of a forecasts file one at a time, in file order: each field, and the rules across
/// rows (one start per panel, one unit per indicator, one format per question, at most 60 target
/// periods per panel and, when asked, no forecast given twice). What it keeps grows with the panels,
/// indicators and experts, and with the forecasts only when it finds those given twice.
/// </summary>
internal sealed class PastForecastChecker(bool findDuplicates)
{
    private readonly Dictionary<string, (DateOnly Start, DateOnly? Closed)> _panelStarts = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string> _units = new(StringComparer.Ordinal);
    private readonly Dictionary<(string, string), bool> _formats = [];
    private readonly Dictionary<(string, string), (bool Calibration, Period Period)> _kinds = [];
    private readonly HashSet<(string, string, Period, string, int)>? _seen = findDuplicates ? [] : null;
    private readonly Dictionary<string, HashSet<Period>> _panelPeriods = new(StringComparer.Ordinal);

    /// <summary>The row, or null when it has errors (added to the report).</summary>
    public PastForecastRow? Check(CsvRow r, RowErrorReport report)
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
            return null;
        }

        // Cross-row rules: one start per panel, one unit per indicator, one format per question, no duplicates.
        if (_panelStarts.TryGetValue(panel!, out var known))
        {
            if (known.Start != start || (closed is not null && known.Closed != closed))
            {
                Error($"panel '{panel}' has another panel_start or panel_closed on an earlier row.");
            }
        }
        else
        {
            _panelStarts[panel!] = (start!.Value, closed);
        }
        if (_units.TryGetValue(indicator!, out var knownUnit) && !string.Equals(knownUnit, unit, StringComparison.Ordinal))
        {
            Error($"indicator '{indicator}' has unit '{knownUnit}' on an earlier row.");
        }
        _units.TryAdd(indicator!, unit!);
        var isRange = value is null;
        if (_formats.TryGetValue((panel!, indicator!), out var wasRange) && wasRange != isRange)
        {
            Error($"panel '{panel}' asks about '{indicator}' with {(wasRange ? "ranges (p10, p50, p90)" : "single values")} on earlier rows; one question has one response format.");
        }
        _formats.TryAdd((panel!, indicator!), isRange);
        if (_kinds.TryGetValue((panel!, indicator!), out var known2))
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
        _kinds.TryAdd((panel!, indicator!), (calibration, period!.Value));
        if (_seen is not null && !_seen.Add((panel!, indicator!, period!.Value, expert!, round)))
        {
            Error($"expert '{expert}' has another forecast of {indicator} {period} in round {round} of panel '{panel}'.");
        }
        if (!_panelPeriods.TryGetValue(panel!, out var periods))
        {
            _panelPeriods[panel!] = periods = [];
        }
        if (periods.Add(period.Value) && periods.Count > 60)
        {
            Error($"panel '{panel}' has more than 60 target periods.");
        }
        if (report.Count > before)
        {
            return null;
        }
        return new PastForecastRow(r.Row, panel!, start!.Value, closed ?? _panelStarts[panel!].Closed, indicator!, unit!, period.Value, expert!, round,
            value, isRange ? p10 : null, isRange ? p50 : null, isRange ? p90 : null, calibration);
    }
}
