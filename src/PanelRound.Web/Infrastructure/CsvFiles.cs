using System.Text;
using CsvHelper;

namespace PanelRound.Web.Infrastructure;

/// <summary>One data row of a CSV file, by lower-cased header name, with its 1-based row number and the line it starts on.</summary>
/// <param name="Row">The 1-based number of the data row (the header row is not counted).</param>
/// <param name="Fields">The fields by lower-cased, trimmed header name.</param>
/// <param name="Line">The 1-based line of the file where the row starts (a quoted field may span lines).</param>
public sealed record CsvRow(int Row, IReadOnlyDictionary<string, string> Fields, int Line)
{
    /// <summary>The trimmed field, or null when the column is absent or the field is empty.</summary>
    public string? this[string column] =>
        Fields.TryGetValue(column, out var v) && !string.IsNullOrWhiteSpace(v) ? v.Trim() : null;
}

/// <summary>Why a CSV file cannot be read: the data row (0 for the header row or the whole file), its line, and the message naming both.</summary>
public sealed record CsvError(int Row, int Line, string Message);

/// <summary>A CSV file as read: its header, its rows, and what is wrong with it (nothing when <see cref="IsValid"/>).</summary>
public sealed record CsvTable(IReadOnlyList<string> Headers, IReadOnlyList<CsvRow> Rows, IReadOnlyList<CsvError> Errors)
{
    public bool IsValid => Errors.Count == 0;
}

/// <summary>CSV reading and writing (RFC 4180, comma, header row) for imports, exports and the demo files.</summary>
public static class CsvFiles
{
    /// <summary>
    /// Reads a whole CSV file with a header row, strictly: UTF-8 (a byte order mark is allowed), fields
    /// separated by commas, records ended by CRLF, LF or CR, quoted fields with doubled quotes inside.
    /// Header names are trimmed and lower-cased.
    /// </summary>
    /// <remarks>
    /// The format is RFC 4180, section 2. Anything else is an error naming the row, never a guess:
    /// bytes that are not UTF-8 (no U+FFFD replacement), a quote inside an unquoted field (rule 5),
    /// text after a closing quote, a quoted field that is never closed (which would swallow the rows
    /// after it), a row with another number of fields than the header (rule 4), and a header that
    /// names a column twice. Empty lines hold no fields and are skipped. After a quoting or encoding
    /// error the rest of the file cannot be trusted, so reading stops there; field-count errors are
    /// all reported. Rows are returned only when there is no error. <see cref="CsvFileReader"/> reads
    /// the same way a record at a time, for files too large to hold.
    /// </remarks>
    public static CsvTable Read(Stream stream)
    {
        var reader = CsvFileReader.Open(stream);
        var rows = reader.ReadRows().ToList();
        return reader.Errors.Count > 0 ? new CsvTable(reader.Headers, [], reader.Errors) : new CsvTable(reader.Headers, rows, []);
    }

    /// <inheritdoc cref="Read(Stream)"/>
    public static CsvTable Read(ReadOnlySpan<byte> bytes)
    {
        using var stream = new MemoryStream(bytes.ToArray(), writable: false);
        return Read(stream);
    }

    /// <summary>Reads a file written by <see cref="WriteFile"/>; a file that is not valid CSV is an error of the program, not of input.</summary>
    public static CsvTable ReadFile(string path)
    {
        var table = Read(File.ReadAllBytes(path));
        return table.IsValid ? table
            : throw new InvalidDataException($"{path}: " + string.Join(" ", table.Errors.Take(5).Select(e => e.Message)));
    }

    /// <summary>Writes a header and rows; null fields are written empty.</summary>
    public static void Write(TextWriter writer, IReadOnlyList<string> headers, IEnumerable<IReadOnlyList<string?>> rows)
    {
        using var csv = CsvWriter.Create(writer, null, leaveOpen: true);
        csv.WriteHeader(headers.ToArray());
        foreach (var row in rows)
        {
            foreach (var field in row)
            {
                csv.WriteField(field ?? "");
            }
            csv.EndRecord();
        }
        csv.Flush();
    }

    public static void WriteFile(string path, IReadOnlyList<string> headers, IEnumerable<IReadOnlyList<string?>> rows)
    {
        using var w = new StreamWriter(path, false, new UTF8Encoding(false)) { NewLine = "\n" };
        Write(w, headers, rows);
    }
}
