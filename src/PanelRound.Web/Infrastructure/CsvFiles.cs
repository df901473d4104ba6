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
    private static readonly UTF8Encoding StrictUtf8 = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

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
    /// all reported. Rows are returned only when there is no error.
    /// </remarks>
    public static CsvTable Read(Stream stream)
    {
        using var buffer = new MemoryStream();
        stream.CopyTo(buffer);
        return Read(buffer.GetBuffer().AsSpan(0, (int)buffer.Length));
    }

    /// <inheritdoc cref="Read(Stream)"/>
    public static CsvTable Read(ReadOnlySpan<byte> bytes)
    {
        var start = bytes.StartsWith("\uFEFF"u8) ? 3 : 0;
        var reader = new RecordReader(bytes, start);
        var errors = new List<CsvError>();
        var rows = new List<CsvRow>();
        IReadOnlyList<string> headers = [];
        var record = 0;
        CsvError? error;
        while (reader.Next(record, out var fields, out var line, out error))
        {
            if (record == 0)
            {
                headers = fields.Select(h => h.Trim().ToLowerInvariant()).ToList();
                var twice = headers.Where(h => h.Length > 0).GroupBy(h => h, StringComparer.Ordinal).Where(g => g.Count() > 1).Select(g => g.Key).ToList();
                if (twice.Count > 0)
                {
                    errors.Add(new CsvError(0, line, $"The header row names {string.Join(", ", twice.Select(h => $"'{h}'"))} more than once."));
                }
            }
            else if (fields.Count != headers.Count)
            {
                errors.Add(new CsvError(record, line, $"{Where(record, line)}: {fields.Count} fields, but the header row has {headers.Count} (a comma too many or too few, or a field with a comma that is not quoted?)."));
            }
            else
            {
                var byName = new Dictionary<string, string>(StringComparer.Ordinal);
                for (var i = 0; i < headers.Count; i++)
                {
                    byName[headers[i]] = fields[i];
                }
                rows.Add(new CsvRow(record, byName, line));
            }
            record++;
        }
        if (error is not null)
        {
            errors.Add(error);
        }
        return errors.Count > 0 ? new CsvTable(headers, [], errors) : new CsvTable(headers, rows, []);
    }

    /// <summary>Reads a file written by <see cref="WriteFile"/>; a file that is not valid CSV is an error of the program, not of input.</summary>
    public static CsvTable ReadFile(string path)
    {
        var table = Read(File.ReadAllBytes(path));
        return table.IsValid ? table
            : throw new InvalidDataException($"{path}: " + string.Join(" ", table.Errors.Take(5).Select(e => e.Message)));
    }

    /// <summary>How an error names its place: the data row and its line, or the header row.</summary>
    private static string Where(int row, int line) => row == 0 ? $"The header row (line {line})" : $"Row {row} (line {line})";

    /// <summary>
    /// The records of a CSV file, one at a time. The structural characters (comma, quote, CR, LF) are
    /// ASCII and never part of a multi-byte UTF-8 sequence, so the bytes are split first and each field
    /// is then decoded strictly, which names the row of any invalid byte.
    /// </summary>
    private ref struct RecordReader(ReadOnlySpan<byte> bytes, int start)
    {
        private readonly ReadOnlySpan<byte> _bytes = bytes;
        private int _at = start;
        private int _line = 1;

        /// <summary>The next record, or false at the end of the file or at an error (then <paramref name="error"/> says what).</summary>
        public bool Next(int record, out List<string> fields, out int line, out CsvError? error)
        {
            fields = [];
            error = null;
            // Empty lines hold no fields.
            while (_at < _bytes.Length && _bytes[_at] is (byte)'\r' or (byte)'\n')
            {
                SkipLineBreak();
            }
            line = _line;
            if (_at >= _bytes.Length)
            {
                return false;
            }
            while (true)
            {
                var field = _at < _bytes.Length && _bytes[_at] == (byte)'"' ? Quoted(record, line, out error) : Unquoted(record, line, out error);
                if (error is not null)
                {
                    return false;
                }
                fields.Add(field!);
                if (_at >= _bytes.Length)
                {
                    return true;
                }
                if (_bytes[_at] == (byte)',')
                {
                    _at++;
                    continue;
                }
                SkipLineBreak();
                return true;
            }
        }

        private string? Unquoted(int record, int line, out CsvError? error)
        {
            var from = _at;
            while (_at < _bytes.Length && _bytes[_at] is not ((byte)',' or (byte)'\r' or (byte)'\n'))
            {
                if (_bytes[_at] == (byte)'"')
                {
                    error = new CsvError(record, line, $"{Where(record, line)}: a quote inside a field that does not start with one (byte {_at + 1}); "
                        + "put the whole field in quotes and double the quotes inside it.");
                    return null;
                }
                _at++;
            }
            return Decode(_bytes[from.._at], from, record, line, out error);
        }

        private string? Quoted(int record, int line, out CsvError? error)
        {
            var from = ++_at;
            while (true)
            {
                var quote = _bytes[_at..].IndexOf((byte)'"');
                if (quote < 0)
                {
                    error = new CsvError(record, line, $"{Where(record, line)}: a quoted field that starts in this row is never closed, so it would swallow the rest of the file; "
                        + "close the quote, or double the quotes inside the field.");
                    return null;
                }
                CountLines(_bytes.Slice(_at, quote));
                _at += quote + 1;
                if (_at < _bytes.Length && _bytes[_at] == (byte)'"')
                {
                    _at++;
                    continue;
                }
                break;
            }
            var raw = _bytes[from..(_at - 1)];
            if (_at < _bytes.Length && _bytes[_at] is not ((byte)',' or (byte)'\r' or (byte)'\n'))
            {
                error = new CsvError(record, line, $"{Where(record, line)}: text after the closing quote of a quoted field (byte {_at + 1}); "
                    + "put the whole field in quotes and double the quotes inside it.");
                return null;
            }
            // Inside a closed quoted field every quote is doubled.
            return Decode(raw, from, record, line, out error)?.Replace("\"\"", "\"", StringComparison.Ordinal);
        }

        private static string? Decode(ReadOnlySpan<byte> raw, int offset, int record, int line, out CsvError? error)
        {
            try
            {
                error = null;
                var text = StrictUtf8.GetString(raw);
                if (text.IndexOf('\0', StringComparison.Ordinal) is var nul and >= 0)
                {
                    // NUL is not text (PostgreSQL cannot even store it); refused like a byte that is not UTF-8.
                    error = new CsvError(record, line, $"{Where(record, line)}: byte {offset + Encoding.UTF8.GetByteCount(text[..nul]) + 1} is a NUL character, which is not text.");
                    return null;
                }
                return text;
            }
            catch (DecoderFallbackException e)
            {
                var at = offset + Math.Max(e.Index, 0) + 1;
                error = new CsvError(record, line, $"{Where(record, line)}: byte {at} is not UTF-8 text (is the file saved in another encoding, such as Latin-1 or Windows-1252?); "
                    + "save it as CSV UTF-8.");
                return null;
            }
        }

        private void SkipLineBreak()
        {
            if (_bytes[_at] == (byte)'\r' && _at + 1 < _bytes.Length && _bytes[_at + 1] == (byte)'\n')
            {
                _at++;
            }
            _at++;
            _line++;
        }

        private void CountLines(ReadOnlySpan<byte> text)
        {
            for (var i = 0; i < text.Length; i++)
            {
                if (text[i] == (byte)'\n' || (text[i] == (byte)'\r' && (i + 1 == text.Length || text[i + 1] != (byte)'\n')))
                {
                    _line++;
                }
            }
        }
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
