using System.Text;
using CsvHelper;

namespace PanelRound.Web.Infrastructure;

/// <summary>One data row of a CSV file, by lower-cased header name, with its 1-based row number.</summary>
public sealed record CsvRow(int Row, IReadOnlyDictionary<string, string> Fields)
{
    /// <summary>The trimmed field, or null when the column is absent or the field is empty.</summary>
    public string? this[string column] =>
        Fields.TryGetValue(column, out var v) && !string.IsNullOrWhiteSpace(v) ? v.Trim() : null;
}

/// <summary>CSV reading and writing (RFC 4180, comma, header row) for imports, exports and the demo files.</summary>
public static class CsvFiles
{
    /// <summary>Reads a whole CSV with a header row. Header names are trimmed and lower-cased.</summary>
    public static (IReadOnlyList<string> Headers, IReadOnlyList<CsvRow> Rows) Read(Stream stream)
    {
        using var reader = CsvReader.Create(stream, null, leaveOpen: true);
        var headers = reader.Headers.Select(h => h.Trim().ToLowerInvariant()).ToList();
        var rows = new List<CsvRow>();
        while (reader.Read())
        {
            var fields = new Dictionary<string, string>(StringComparer.Ordinal);
            for (var i = 0; i < headers.Count && i < reader.FieldCount; i++)
            {
                fields[headers[i]] = reader.GetString(i);
            }
            rows.Add(new CsvRow((int)reader.RowNumber, fields));
        }
        return (headers, rows);
    }

    public static (IReadOnlyList<string> Headers, IReadOnlyList<CsvRow> Rows) ReadFile(string path)
    {
        using var s = File.OpenRead(path);
        return Read(s);
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
