using System.Globalization;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// The one path from an uploaded CSV file to field errors, shared by every import (observations,
/// outcomes, past panels): the file is read strictly (<see cref="CsvFiles.Read(Stream)"/>), and each
/// problem is keyed by row (<c>row 3</c>, or <c>forecasts row 3</c> for a named file of a
/// multi-file import), or by the file's own key for the header.
/// </summary>
public static class CsvUploads
{
    /// <summary>
    /// Reads an uploaded CSV file for an import. When it cannot be read, adds every error (keyed like
    /// the imports' row errors) and returns null.
    /// </summary>
    /// <param name="csv">The uploaded file.</param>
    /// <param name="errors">Where the file's errors go.</param>
    /// <param name="file">The upload's field name (<c>forecasts</c>), or null for an import of one file (keyed <c>file</c>).</param>
    public static CsvTable? Read(Stream csv, FieldErrors errors, string? file = null)
    {
        var table = CsvFiles.Read(csv);
        foreach (var e in table.Errors)
        {
            errors.Add(ErrorKey(file, e), e.Message);
        }
        return table.IsValid ? table : null;
    }

    /// <summary>The error key of an error of an uploaded CSV file: its row's key, or the file's own (<c>forecasts</c>, or <c>file</c>) for the header or the whole file.</summary>
    public static string ErrorKey(string? file, CsvError error) => error.Row == 0 ? file ?? "file" : RowKey(file, error.Row);

    /// <summary>The error key of a row of an uploaded CSV file: <c>row 3</c>, or <c>forecasts row 3</c> for a named file.</summary>
    public static string RowKey(string? file, int row) => file is null ? $"row {row}" : $"{file} row {row}";

    /// <summary>Adds an error under <c>file</c> for each required column the header lacks; true when none is missing.</summary>
    /// <param name="table">The file as read.</param>
    /// <param name="errors">Where the errors go.</param>
    /// <param name="required">The columns the import needs.</param>
    /// <param name="optional">The optional columns, named in the message.</param>
    public static bool RequireColumns(CsvTable table, FieldErrors errors, IReadOnlyList<string> required, string optional)
    {
        var missing = required.Where(c => !table.Headers.Contains(c)).ToList();
        foreach (var column in missing)
        {
            errors.Add("file", $"The header row has no '{column}' column (needed: {string.Join(", ", required)}; optional: {optional}).");
        }
        return missing.Count == 0;
    }

    /// <summary>
    /// Reads the columns every observation-shaped file has, <c>value</c> and <c>observed_on</c>, of one row
    /// of a one-file import; a field that cannot be read is an error keyed by the row.
    /// </summary>
    public static (double? Value, DateOnly? ObservedOn) ReadValueAndObservedOn(CsvRow row, FieldErrors errors)
    {
        var value = ParseNumber(row["value"], out var badValue);
        if (badValue is not null)
        {
            errors.Add(RowKey(null, row.Row), $"Row {row.Row} (line {row.Line}): value {badValue}");
        }
        var observedOn = ParseDate(row["observed_on"], out var badDate);
        if (badDate)
        {
            errors.Add(RowKey(null, row.Row), $"Row {row.Row} (line {row.Line}): observed_on '{row["observed_on"]}' is not a date (yyyy-MM-dd).");
        }
        return (value, observedOn);
    }

    /// <summary>
    /// Reads a number of a CSV file by the one rule for machine-written numbers (<see cref="Core.Domain.Numbers.TryParseInvariant"/>): invariant culture, an optional sign, digits with an
    /// optional dot and decimals, an optional exponent (<c>e</c> or <c>E</c>, optional sign, digits); no
    /// thousands separators, no NaN or infinity. The magnitude is at most
    /// <see cref="Core.Domain.Numbers.MaxMagnitude"/>, and a number whose digits are not all zero may not underflow
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

    /// <summary>Reads a day written <c>yyyy-MM-dd</c>; null when the field is empty (no error) or wrong (<paramref name="bad"/> true).</summary>
    public static DateOnly? ParseDate(string? text, out bool bad)
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
