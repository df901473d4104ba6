using System.Collections;
using System.Diagnostics.CodeAnalysis;
using System.Text;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// A CSV file read one record at a time from a stream, by the rules of <see cref="CsvFiles.Read(Stream)"/>
/// (RFC 4180, section 2, strict UTF-8, a header row): the header on <see cref="Open"/>, then the data
/// rows as they come. Memory is one buffer that holds the longest record (64 KiB to start), whatever
/// the size of the file.
/// </summary>
/// <remarks>
/// A caller that acts on rows must know that an error can come after them: a row with another number
/// of fields is left out and reported, and reading stops at a quoting or encoding error. The file is
/// valid when <see cref="Errors"/> is empty after the last row.
/// </remarks>
public sealed class CsvFileReader
{
    /// <summary>The size the buffer starts at; it grows for a longer record.</summary>
    public const int DefaultBufferSize = 64 * 1024;

    private static readonly UTF8Encoding StrictUtf8 = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    private readonly Stream _stream;
    private readonly List<CsvError> _errors = [];
    private byte[] _buffer;

    /// <summary>The next byte to read, as an index into the buffer.</summary>
    private int _at;

    /// <summary>How many bytes of the buffer hold data.</summary>
    private int _length;

    /// <summary>The offset in the file of the buffer's first byte.</summary>
    private long _offset;

    private bool _endOfStream;
    private int _line = 1;
    private int _record;
    private bool _stopped;
    private Dictionary<string, int> _columns = new(StringComparer.Ordinal);

    private CsvFileReader(Stream stream, int bufferSize)
    {
        _stream = stream;
        _buffer = new byte[Math.Max(4, bufferSize)];
    }

    /// <summary>The header names, trimmed and lower-cased; empty for an empty file or an unreadable header row.</summary>
    public IReadOnlyList<string> Headers { get; private set; } = [];

    /// <summary>What is wrong with the file so far, in the order found; complete once <see cref="ReadRows"/> has ended.</summary>
    public IReadOnlyList<CsvError> Errors => _errors;

    /// <summary>Reads the byte order mark, if any, and the header row.</summary>
    /// <param name="stream">The file, read from its current position to its end; the caller disposes it.</param>
    /// <param name="bufferSize">The buffer's first size in bytes (tests use a few bytes to cut records anywhere).</param>
    public static CsvFileReader Open(Stream stream, int bufferSize = DefaultBufferSize)
    {
        var reader = new CsvFileReader(stream, bufferSize);
        reader.Fill(3);
        if (reader._length >= 3 && reader._buffer.AsSpan(0, 3).SequenceEqual("\uFEFF"u8))
        {
            reader._at = 3;
        }
        if (reader.Next(out var fields, out var line))
        {
            var headers = fields.Select(h => h.Trim().ToLowerInvariant()).ToList();
            var twice = headers.Where(h => h.Length > 0).GroupBy(h => h, StringComparer.Ordinal).Where(g => g.Count() > 1).Select(g => g.Key).ToList();
            if (twice.Count > 0)
            {
                reader._errors.Add(new CsvError(0, line, $"The header row names {string.Join(", ", twice.Select(h => $"'{h}'"))} more than once."));
            }
            reader.Headers = headers;
            // A column named twice: the later one is read, as a dictionary filled in order would.
            reader._columns = headers.Select((h, i) => (h, i)).GroupBy(x => x.h, StringComparer.Ordinal)
                .ToDictionary(g => g.Key, g => g.Last().i, StringComparer.Ordinal);
        }
        return reader;
    }

    /// <summary>
    /// The data rows, each once, in file order: a row with another number of fields than the header is
    /// reported and left out; at a quoting or encoding error the rows end.
    /// </summary>
    public IEnumerable<CsvRow> ReadRows()
    {
        while (Next(out var fields, out var line))
        {
            if (fields.Count != Headers.Count)
            {
                _errors.Add(new CsvError(_record - 1, line, $"{Where(_record - 1, line)}: {fields.Count} fields, but the header row has {Headers.Count} (a comma too many or too few, or a field with a comma that is not quoted?)."));
                continue;
            }
            yield return new CsvRow(_record - 1, new FieldMap(_columns, [.. fields]), line);
        }
    }

    /// <summary>How an error names its place: the data row and its line, or the header row.</summary>
    private static string Where(int row, int line) => row == 0 ? $"The header row (line {line})" : $"Row {row} (line {line})";

    /// <summary>The next record, or false at the end of the file or at an error (then added to <see cref="Errors"/>, and reading stops).</summary>
    private bool Next(out List<string> fields, out int line)
    {
        fields = [];
        line = _line;
        if (_stopped)
        {
            return false;
        }
        // Empty lines hold no fields.
        while (Fill(2) > 0 && _buffer[_at] is (byte)'\r' or (byte)'\n')
        {
            SkipLineBreak();
        }
        line = _line;
        if (_at >= _length)
        {
            _stopped = true;
            return false;
        }
        BufferRecord();
        var record = _record++;
        while (true)
        {
            CsvError? error;
            var field = _at < _length && _buffer[_at] == (byte)'"' ? Quoted(record, line, out error) : Unquoted(record, line, out error);
            if (error is not null)
            {
                _errors.Add(error);
                _stopped = true;
                return false;
            }
            fields.Add(field!);
            if (_at >= _length)
            {
                return true;
            }
            if (_buffer[_at] == (byte)',')
            {
                _at++;
                continue;
            }
            SkipLineBreak();
            return true;
        }
    }

    /// <summary>
    /// Makes the buffer hold the whole record that starts at the next byte, and the byte after its line
    /// break: up to the first CR or LF after an even number of quotes, or to the end of the file.
    /// </summary>
    /// <remarks>
    /// Implementation note: outside quotes the count of quotes is even in a record that follows the
    /// rules, so this finds the record's end without parsing it. In a record that breaks them the count
    /// may run on further than the record, but the parser stops at the break, which lies before.
    /// </remarks>
    private void BufferRecord()
    {
        // Indexes here count from the next byte, so that they hold when Fill moves the data to the buffer's start.
        var i = 0;
        var inQuotes = false;
        while (true)
        {
            if (_at + i >= _length)
            {
                if (Fill(i + 1) <= i)
                {
                    return;
                }
                continue;
            }
            var rest = _buffer.AsSpan(_at + i, _length - _at - i);
            var k = inQuotes ? rest.IndexOf((byte)'"') : rest.IndexOfAny((byte)'"', (byte)'\r', (byte)'\n');
            if (k < 0)
            {
                i = _length - _at;
                continue;
            }
            i += k;
            if (_buffer[_at + i] == (byte)'"')
            {
                inQuotes = !inQuotes;
                i++;
                continue;
            }
            // The line break and the byte after it: a CR may be followed by its LF.
            Fill(i + 2);
            return;
        }
    }

    /// <summary>Makes at least <paramref name="count"/> bytes from the next one available unless the file ends first; returns how many are.</summary>
    /// <remarks>The bytes before the next one are dropped and the rest moved to the buffer's start.</remarks>
    private int Fill(int count)
    {
        if (_length - _at >= count || _endOfStream)
        {
            return _length - _at;
        }
        if (_at > 0)
        {
            Buffer.BlockCopy(_buffer, _at, _buffer, 0, _length - _at);
            _offset += _at;
            _length -= _at;
            _at = 0;
        }
        if (count > _buffer.Length)
        {
            Array.Resize(ref _buffer, Math.Max(count, _buffer.Length * 2));
        }
        while (_length < count)
        {
            var read = _stream.Read(_buffer, _length, _buffer.Length - _length);
            if (read == 0)
            {
                _endOfStream = true;
                break;
            }
            _length += read;
        }
        return _length - _at;
    }

    private string? Unquoted(int record, int line, out CsvError? error)
    {
        var from = _at;
        while (_at < _length && _buffer[_at] is not ((byte)',' or (byte)'\r' or (byte)'\n'))
        {
            if (_buffer[_at] == (byte)'"')
            {
                error = new CsvError(record, line, $"{Where(record, line)}: a quote inside a field that does not start with one (byte {_offset + _at + 1}); "
                    + "put the whole field in quotes and double the quotes inside it.");
                return null;
            }
            _at++;
        }
        return Decode(_buffer.AsSpan(from, _at - from), from, record, line, out error);
    }

    private string? Quoted(int record, int line, out CsvError? error)
    {
        var from = ++_at;
        while (true)
        {
            var quote = _buffer.AsSpan(_at, _length - _at).IndexOf((byte)'"');
            if (quote < 0)
            {
                error = new CsvError(record, line, $"{Where(record, line)}: a quoted field that starts in this row is never closed, so it would swallow the rest of the file; "
                    + "close the quote, or double the quotes inside the field.");
                return null;
            }
            CountLines(_buffer.AsSpan(_at, quote));
            _at += quote + 1;
            if (_at < _length && _buffer[_at] == (byte)'"')
            {
                _at++;
                continue;
            }
            break;
        }
        var raw = _buffer.AsSpan(from, _at - 1 - from);
        if (_at < _length && _buffer[_at] is not ((byte)',' or (byte)'\r' or (byte)'\n'))
        {
            error = new CsvError(record, line, $"{Where(record, line)}: text after the closing quote of a quoted field (byte {_offset + _at + 1}); "
                + "put the whole field in quotes and double the quotes inside it.");
            return null;
        }
        // Inside a closed quoted field every quote is doubled.
        return Decode(raw, from, record, line, out error)?.Replace("\"\"", "\"", StringComparison.Ordinal);
    }

    /// <summary>Decodes a field strictly; <paramref name="at"/> is its index in the buffer.</summary>
    private string? Decode(ReadOnlySpan<byte> raw, int at, int record, int line, out CsvError? error)
    {
        var offset = _offset + at;
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
            var where = offset + Math.Max(e.Index, 0) + 1;
            error = new CsvError(record, line, $"{Where(record, line)}: byte {where} is not UTF-8 text (is the file saved in another encoding, such as Latin-1 or Windows-1252?); "
                + "save it as CSV UTF-8.");
            return null;
        }
    }

    private void SkipLineBreak()
    {
        if (_buffer[_at] == (byte)'\r' && _at + 1 < _length && _buffer[_at + 1] == (byte)'\n')
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

    /// <summary>A row's fields by header name: the header's index, shared by every row, and the row's values.</summary>
    private sealed class FieldMap(Dictionary<string, int> columns, string[] values) : IReadOnlyDictionary<string, string>
    {
        public string this[string key] => columns.TryGetValue(key, out var i) ? values[i] : throw new KeyNotFoundException(key);

        public IEnumerable<string> Keys => columns.Keys;

        public IEnumerable<string> Values => columns.Values.Select(i => values[i]);

        public int Count => columns.Count;

        public bool ContainsKey(string key) => columns.ContainsKey(key);

        public bool TryGetValue(string key, [MaybeNullWhen(false)] out string value)
        {
            if (columns.TryGetValue(key, out var i))
            {
                value = values[i];
                return true;
            }
            value = null;
            return false;
        }

        public IEnumerator<KeyValuePair<string, string>> GetEnumerator() =>
            columns.Select(c => new KeyValuePair<string, string>(c.Key, values[c.Value])).GetEnumerator();

        IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();
    }
}
