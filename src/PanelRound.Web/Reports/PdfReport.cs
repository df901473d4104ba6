using PdfSharp;
using PdfSharp.Drawing;
using PdfSharp.Pdf;

namespace PanelRound.Web.Reports;

/// <summary>
/// A flowing A4 document on PDFsharp: headings, wrapped paragraphs, tables whose header repeats
/// after a page break, vector charts, a running header and "page i of n" on every page. Free text
/// is drawn as glyphs only: nothing in it is ever interpreted (no markup, no links).
/// </summary>
/// <remarks>
/// Implementation note: PDFsharp has no layout engine (MigraDoc is not served), so this class
/// breaks lines with <see cref="XGraphics.MeasureString(string, XFont)"/> and draws tables itself.
/// A word longer than a line is broken between characters.
/// </remarks>
public sealed class PdfReport : IDisposable
{
    public const double Margin = 50;
    private const double HeaderSpace = 22;
    private const double FooterSpace = 24;

    private readonly PdfDocument _document = new();
    private readonly string _runningHeader;
    private readonly string _footerNote;
    private XGraphics? _gfx;
    private double _y;

    public PdfReport(string title, string runningHeader, string footerNote)
    {
        ReportFonts.EnsureInstalled();
        _document.Info.Title = title;
        _document.Info.Creator = "PanelRound";
        _runningHeader = runningHeader;
        _footerNote = footerNote;
        NewPage();
    }

    /// <summary>The width available for content, in points.</summary>
    public double ContentWidth => Page.Width.Point - (2 * Margin);

    private PdfPage Page => _document.Pages[_document.PageCount - 1];

    private double Bottom => Page.Height.Point - Margin - FooterSpace;

    public int PageCount => _document.PageCount;

    public static XFont Font(double size, bool bold = false) => new(ReportFonts.Family, size, bold ? XFontStyleEx.Bold : XFontStyleEx.Regular);

    public void NewPage()
    {
        _gfx?.Dispose();
        var page = _document.AddPage();
        page.Size = PageSize.A4;
        _gfx = XGraphics.FromPdfPage(page);
        _y = Margin + HeaderSpace;
    }

    /// <summary>Starts a new page unless <paramref name="height"/> points still fit on this one.</summary>
    public void EnsureSpace(double height)
    {
        if (_y + height > Bottom)
        {
            NewPage();
        }
    }

    public void Space(double points) => _y += points;

    public void Heading(string text, int level = 1)
    {
        var size = level switch { 1 => 16, 2 => 12.5, _ => 10.5 };
        // A heading keeps at least a few lines of what follows on its page.
        EnsureSpace((size * 3.2) + 70);
        _y += level == 1 ? 4 : 6;
        Paragraph(text, size, bold: true);
        _y += 2;
    }

    /// <summary>A wrapped paragraph; returns nothing, advances the cursor.</summary>
    public void Paragraph(string text, double size = 9.5, bool bold = false, string colour = "#222222", double indent = 0)
    {
        var font = Font(size, bold);
        var lineHeight = size * 1.32;
        var rgb = int.Parse(colour.TrimStart('#'), System.Globalization.NumberStyles.HexNumber, System.Globalization.CultureInfo.InvariantCulture);
        // Opaque: a colour from an RGB integer alone would have alpha 0 and draw invisible text.
        var brush = new XSolidBrush(XColor.FromArgb(255, (rgb >> 16) & 0xFF, (rgb >> 8) & 0xFF, rgb & 0xFF));
        foreach (var line in Wrap(text, font, ContentWidth - indent))
        {
            EnsureSpace(lineHeight);
            _gfx!.DrawString(line, font, brush, Margin + indent, _y + size, XStringFormats.BaseLineLeft);
            _y += lineHeight;
        }
        _y += size * 0.45;
    }

    /// <summary>
    /// A table: relative column widths, right-aligned numeric columns, cells wrapped; the header
    /// row is repeated at the top of each page the table continues on.
    /// </summary>
    public void Table(IReadOnlyList<string> headers, IEnumerable<IReadOnlyList<string>> rows, IReadOnlyList<double> widths, IReadOnlySet<int>? rightAligned = null, double size = 8)
    {
        var total = widths.Sum();
        var columns = widths.Select(w => w / total * ContentWidth).ToArray();
        var body = Font(size);
        var head = Font(size, bold: true);
        var lineHeight = size * 1.3;
        var pad = 3.0;

        double RowHeight(IReadOnlyList<string> cells, XFont font) =>
            (cells.Select((c, i) => Wrap(c, font, columns[i] - (2 * pad)).Count).DefaultIfEmpty(1).Max() * lineHeight) + (2 * pad);

        void DrawRow(IReadOnlyList<string> cells, XFont font, bool header)
        {
            var h = RowHeight(cells, font);
            if (header)
            {
                _gfx!.DrawRectangle(new XSolidBrush(XColor.FromArgb(238, 241, 245)), Margin, _y, ContentWidth, h);
            }
            var x = Margin;
            for (var i = 0; i < columns.Length; i++)
            {
                var lines = Wrap(i < cells.Count ? cells[i] : "", font, columns[i] - (2 * pad));
                for (var l = 0; l < lines.Count; l++)
                {
                    var w = _gfx!.MeasureString(lines[l], font).Width;
                    var tx = rightAligned?.Contains(i) == true && !header ? x + columns[i] - pad - w : x + pad;
                    _gfx.DrawString(lines[l], font, XBrushes.Black, tx, _y + pad + (l * lineHeight) + size, XStringFormats.BaseLineLeft);
                }
                x += columns[i];
            }
            _y += h;
            _gfx!.DrawLine(new XPen(XColor.FromArgb(210, 214, 220), 0.5), Margin, _y, Margin + ContentWidth, _y);
        }

        EnsureSpace(RowHeight(headers, head) + (2 * lineHeight) + (2 * pad));
        DrawRow(headers, head, header: true);
        foreach (var row in rows)
        {
            var h = RowHeight(row, body);
            if (_y + h > Bottom)
            {
                NewPage();
                DrawRow(headers, head, header: true);
            }
            DrawRow(row, body, header: false);
        }
        _y += 8;
    }

    /// <summary>A chart of the full content width, drawn as vectors.</summary>
    public void Chart(ChartModel chart, double height = 210)
    {
        EnsureSpace(height + 6);
        chart.Draw(_gfx!, new XRect(Margin, _y, ContentWidth, height));
        _y += height + 6;
    }

    /// <summary>Draws the running header and "page i of n" on every page, and returns the PDF's bytes.</summary>
    public byte[] ToBytes()
    {
        _gfx?.Dispose();
        _gfx = null;
        var small = Font(7.5);
        var grey = new XSolidBrush(XColor.FromArgb(110, 110, 110));
        for (var i = 0; i < _document.PageCount; i++)
        {
            var page = _document.Pages[i];
            using var gfx = XGraphics.FromPdfPage(page, XGraphicsPdfPageOptions.Append);
            var width = page.Width.Point;
            var height = page.Height.Point;
            gfx.DrawString(Clip(gfx, _runningHeader, small, width - (2 * Margin)), small, grey, Margin, Margin, XStringFormats.BaseLineLeft);
            gfx.DrawLine(new XPen(XColor.FromArgb(200, 200, 200), 0.5), Margin, Margin + 4, width - Margin, Margin + 4);
            gfx.DrawString(Clip(gfx, _footerNote, small, width - (2 * Margin) - 80), small, grey, Margin, height - Margin + 6, XStringFormats.BaseLineLeft);
            var number = $"Page {i + 1} of {_document.PageCount}";
            gfx.DrawString(number, small, grey, width - Margin - gfx.MeasureString(number, small).Width, height - Margin + 6, XStringFormats.BaseLineLeft);
        }
        using var stream = new MemoryStream();
        _document.Save(stream, closeStream: false);
        return stream.ToArray();
    }

    public void Dispose()
    {
        _gfx?.Dispose();
        _document.Dispose();
    }

    private static string Clip(XGraphics gfx, string text, XFont font, double width)
    {
        if (gfx.MeasureString(text, font).Width <= width)
        {
            return text;
        }
        return text[..FittingPrefix(gfx, text, font, width - gfx.MeasureString("…", font).Width)] + "…";
    }

    /// <summary>
    /// The length of the longest prefix of <paramref name="text"/> that fits, cut only between
    /// text elements (never inside a surrogate pair or a combining sequence), found by binary search;
    /// at least one text element.
    /// </summary>
    private static int FittingPrefix(XGraphics measure, string text, XFont font, double width)
    {
        var starts = System.Globalization.StringInfo.ParseCombiningCharacters(text);
        int lo = 1, hi = starts.Length - 1, best = 1;
        while (lo <= hi)
        {
            var mid = (lo + hi) / 2;
            if (measure.MeasureString(text[..starts[mid]], font).Width <= width)
            {
                best = mid;
                lo = mid + 1;
            }
            else
            {
                hi = mid - 1;
            }
        }
        return starts.Length > best ? starts[best] : text.Length;
    }

    /// <summary>Breaks text into lines that fit the width: at spaces, at line breaks, and inside words longer than a line.</summary>
    public List<string> Wrap(string text, XFont font, double width)
    {
        var measure = _gfx!;
        var lines = new List<string>();
        foreach (var paragraph in (text ?? "").Replace("\r\n", "\n", StringComparison.Ordinal).Split('\n'))
        {
            var current = "";
            foreach (var word in paragraph.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            {
                var candidate = current.Length == 0 ? word : current + " " + word;
                if (measure.MeasureString(candidate, font).Width <= width)
                {
                    current = candidate;
                    continue;
                }
                if (current.Length > 0)
                {
                    lines.Add(current);
                }
                current = word;
                while (measure.MeasureString(current, font).Width > width)
                {
                    var cut = FittingPrefix(measure, current, font, width);
                    if (cut <= 0 || cut >= current.Length)
                    {
                        break;
                    }
                    lines.Add(current[..cut]);
                    current = current[cut..];
                }
            }
            lines.Add(current);
        }
        return lines;
    }
}
