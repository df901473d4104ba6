using DocumentFormat.OpenXml;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;

namespace PanelRound.Web.Reports;

/// <summary>
/// Cells that spreadsheet programs would run as formulas are made inert: a text beginning with
/// <c>=</c>, <c>+</c>, <c>-</c>, <c>@</c>, a tab or a carriage return gets a leading apostrophe
/// (the OWASP guidance on CSV injection, common practice). Numbers are written as numbers and
/// never pass through here, so a negative number stays a number.
/// </summary>
public static class SafeCells
{
    public static string? Text(string? value) =>
        value is { Length: > 0 } v && v[0] is '=' or '+' or '-' or '@' or '\t' or '\r' ? "'" + v : value;
}

/// <summary>A cell of a sheet: a number (written as a numeric cell) or a text (inline string, neutralised).</summary>
public readonly record struct XlsxCell(double? Number, string? Text)
{
    public static implicit operator XlsxCell(double value) => new(value, null);

    public static implicit operator XlsxCell(string? value) => new(null, value);

    public static XlsxCell Of(double? value) => new(value, null);
}

/// <summary>One worksheet: a name, column widths (in characters) and rows.</summary>
public sealed record XlsxSheet(string Name, IReadOnlyList<double> ColumnWidths, IReadOnlyList<IReadOnlyList<XlsxCell>> Rows, bool BoldFirstRow = true);

/// <summary>
/// Writes .xlsx workbooks with the Open XML SDK (DocumentFormat.OpenXml, Microsoft's maintained
/// implementation of ECMA-376): numeric cells as numbers, texts as inline strings (never formulas;
/// a text that begins like a formula also carries the quote-prefix style), explicit column widths
/// (nothing measures fonts), a bold header row.
/// </summary>
public static class Xlsx
{
    public static byte[] Write(IReadOnlyList<XlsxSheet> sheets)
    {
        using var stream = new MemoryStream();
        using (var doc = SpreadsheetDocument.Create(stream, SpreadsheetDocumentType.Workbook))
        {
            var workbook = doc.AddWorkbookPart();
            workbook.Workbook = new Workbook();
            var styles = workbook.AddNewPart<WorkbookStylesPart>();
            styles.Stylesheet = Stylesheet();
            var sheetList = workbook.Workbook.AppendChild(new Sheets());
            uint id = 1;
            var used = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
            foreach (var sheet in sheets)
            {
                var part = workbook.AddNewPart<WorksheetPart>();
                var data = new SheetData();
                var columns = new Columns(sheet.ColumnWidths.Select((w, i) => new Column { Min = (uint)(i + 1), Max = (uint)(i + 1), Width = w, CustomWidth = true }));
                uint r = 1;
                foreach (var row in sheet.Rows)
                {
                    var xrow = new Row { RowIndex = r };
                    for (var c = 0; c < row.Count; c++)
                    {
                        var cell = row[c];
                        var reference = ColumnName(c) + r.ToString(System.Globalization.CultureInfo.InvariantCulture);
                        var style = sheet.BoldFirstRow && r == 1 ? 1u : 0u;
                        if (cell.Number is { } n && double.IsFinite(n))
                        {
                            xrow.Append(new Cell { CellReference = reference, CellValue = new CellValue(n), DataType = CellValues.Number, StyleIndex = style });
                        }
                        else if (cell.Text is { } t)
                        {
                            // A text that could start a formula keeps its characters and gets the quote-prefix
                            // style (styles 2 and 3), which marks it as text even when someone edits the cell.
                            var guarded = SafeCells.Text(t) != t ? 2u : 0u;
                            xrow.Append(new Cell(new InlineString(new Text(t) { Space = SpaceProcessingModeValues.Preserve }))
                            { CellReference = reference, DataType = CellValues.InlineString, StyleIndex = style + guarded });
                        }
                    }
                    data.Append(xrow);
                    r++;
                }
                part.Worksheet = sheet.ColumnWidths.Count > 0 ? new Worksheet(columns, data) : new Worksheet(data);
                sheetList.Append(new Sheet { Id = workbook.GetIdOfPart(part), SheetId = id++, Name = SheetName(sheet.Name, used) });
            }
            workbook.Workbook.Save();
        }
        return stream.ToArray();
    }

    /// <summary>0 → A, 25 → Z, 26 → AA.</summary>
    public static string ColumnName(int index)
    {
        var name = "";
        for (var i = index + 1; i > 0; i = (i - 1) / 26)
        {
            name = (char)('A' + ((i - 1) % 26)) + name;
        }
        return name;
    }

    /// <summary>A valid, unique sheet name: at most 31 characters, none of : \ / ? * [ ].</summary>
    private static string SheetName(string wanted, HashSet<string> used)
    {
        var clean = new string(wanted.Select(ch => ch is ':' or '\\' or '/' or '?' or '*' or '[' or ']' || char.IsSurrogate(ch) ? ' ' : ch).ToArray()).Trim().Trim('\'');
        clean = clean.Length == 0 ? "Sheet" : clean;
        var name = clean.Length > 31 ? clean[..31].TrimEnd('\'') : clean;
        for (var k = 2; !used.Add(name); k++)
        {
            var suffix = $" ({k})";
            name = (clean.Length + suffix.Length > 31 ? clean[..(31 - suffix.Length)] : clean) + suffix;
        }
        return name;
    }

    private static Stylesheet Stylesheet() => new(
        new Fonts(new Font(), new Font(new Bold())) { Count = 2 },
        new Fills(new Fill(new PatternFill { PatternType = PatternValues.None }), new Fill(new PatternFill { PatternType = PatternValues.Gray125 })) { Count = 2 },
        new Borders(new Border()) { Count = 1 },
        new CellFormats(
            new CellFormat(),
            new CellFormat { FontId = 1, ApplyFont = true },
            new CellFormat { QuotePrefix = true },
            new CellFormat { FontId = 1, ApplyFont = true, QuotePrefix = true })
        { Count = 4 });
}
