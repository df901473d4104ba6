using System.Globalization;
using System.Net;
using System.Text;
using PanelRound.Core.Domain;
using PanelRound.Web.Infrastructure;
using PdfSharp.Drawing;

namespace PanelRound.Web.Reports;

/// <summary>How a series is drawn.</summary>
public enum SeriesKind
{
    /// <summary>A line through the values, broken where a period is missing.</summary>
    Line,

    /// <summary>A shaded band from Low to High per period, with the value as a dot.</summary>
    Band,
}

/// <summary>One value of a series at a period; Low and High for bands.</summary>
public readonly record struct ChartPoint(Period Period, double Value, double? Low = null, double? High = null);

/// <summary>A named series: every shown series appears in the legend with its colour and mark.</summary>
/// <param name="Label">The legend's text.</param>
/// <param name="Kind">Line or band.</param>
/// <param name="Colour">The colour, #rrggbb.</param>
/// <param name="Points">The values by period.</param>
/// <param name="Dashed">A dashed line (benchmarks).</param>
/// <param name="Hidden">
/// Not shown until the reader asks: left out of the printed drawing and its legend, and in the page's SVG drawn
/// into a hidden group that a control can show (<see cref="Key"/>); the value axis leaves room for it there.
/// </param>
/// <param name="Key">A name for the series' group in the SVG (<c>data-series</c>), so a page control can show or hide it; null for none.</param>
public sealed record ChartSeries(string Label, SeriesKind Kind, string Colour, IReadOnlyList<ChartPoint> Points, bool Dashed = false, bool Hidden = false, string? Key = null);

/// <summary>
/// One chart model for pages (SVG) and reports (PDF vector drawing): a real time axis (periods at
/// their position in time, so a missing year is a gap in a line, not a step to the next value),
/// "nice" value ticks, and a legend entry for every series.
/// </summary>
public sealed record ChartModel(string Title, string Unit, int Decimals, IReadOnlyList<ChartSeries> Series)
{
    /// <summary>The printed drawing in abstract shapes (hidden series left out), laid out for a width and height in points (1/72 in).</summary>
    public IReadOnlyList<Shape> Layout(double width, double height) => ChartLayout.Build(this, width, height, withHidden: false, new ChartStyle(1));

    /// <summary>
    /// An accessible SVG element (role img, a title, and a text alternative). A series with a <see cref="ChartSeries.Key"/>
    /// is drawn into its own group (<c>&lt;g data-series="key"&gt;</c>), hidden when the series is; the height grows
    /// by a row for each legend row beyond two, so a long legend never squeezes the plot. Every series has a legend entry,
    /// a hidden one too (after the shown ones, in its hidden group), so that a series a reader shows is never a colour without a name.
    /// </summary>
    /// <param name="width">The width of the view box.</param>
    /// <param name="height">The height of the view box before the legend grows it.</param>
    /// <param name="textScale">Text sizes (and the margins that hold text) as a multiple of the printed ones: above 1 for a narrow view box shown on a phone.</param>
    /// <param name="cssClass">A class for the element, or null.</param>
    public string ToSvg(double width = 640, double height = 260, double textScale = 1, string? cssClass = null)
    {
        var style = new ChartStyle(textScale);
        height += Math.Max(0, ChartLayout.LegendRowCount(this, width, style, withHidden: true) - 2) * style.LegendRow;
        height += (ChartLayout.TitleLines(this, width, style).Count - 1) * style.TitleLine;
        var sb = new StringBuilder();
        sb.Append(Inv($"<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {width:0} {height:0}\" width=\"100%\"{(cssClass is null ? "" : " class=\"" + Esc(cssClass) + "\"")} role=\"img\" aria-label=\"{Esc(AltText())}\" font-family=\"DejaVu Sans, Arial, sans-serif\">"));
        sb.Append("<title>").Append(Esc(Title)).Append("</title>");
        string? group = null;
        var hidden = false;
        foreach (var s in ChartLayout.Build(this, width, height, withHidden: true, style))
        {
            if (s.Series != group || (s.Series is not null && s.Hidden != hidden))
            {
                if (group is not null)
                {
                    sb.Append("</g>");
                }
                if (s.Series is not null)
                {
                    sb.Append("<g data-series=\"").Append(Esc(s.Series)).Append('"').Append(s.Hidden ? " visibility=\"hidden\">" : ">");
                }
                group = s.Series;
                hidden = s.Hidden;
            }
            sb.Append(s.ToSvg());
        }
        if (group is not null)
        {
            sb.Append("</g>");
        }
        sb.Append("</svg>");
        return sb.ToString();
    }

    /// <summary>
    /// The chart for a page: a wide drawing for screens and a narrow one with larger text for phones, one of them shown
    /// by the stylesheet (<c>charts.css</c>: <c>.chart-wide</c> and <c>.chart-narrow</c>), so that at 375 px the labels
    /// are still about 11 px high. Both have the same series, groups and legend.
    /// </summary>
    /// <remarks>The phone drawing starts at most <see cref="NarrowYears"/> years before the chart's last period, so that a long history does not squeeze the forecasts into its right edge.</remarks>
    public string ToResponsiveSvg(double width = 640, double height = 260) =>
        ToSvg(width, height, cssClass: "chart-wide") + Recent(NarrowYears).ToSvg(NarrowWidth, NarrowHeight, NarrowTextScale, "chart-narrow");

    /// <summary>The narrow drawing's view box and text scale: shown at about 340 px wide, its 8-unit labels are about 11 px.</summary>
    internal const double NarrowWidth = 340, NarrowHeight = 300, NarrowTextScale = 1.35;

    /// <summary>The years the phone drawing spans at most.</summary>
    internal const int NarrowYears = 9;

    /// <summary>The chart cut to the periods of its last <paramref name="years"/> years (a series left with no point keeps its legend entry).</summary>
    internal ChartModel Recent(int years)
    {
        var points = Series.SelectMany(s => s.Points).ToList();
        if (points.Count == 0)
        {
            return this;
        }
        var from = points.Max(p => p.Period.Year) - years + 1;
        if (points.All(p => p.Period.Year >= from))
        {
            return this;
        }
        // The title says the drawing is cut, so that no one reads the first year shown as the series' start.
        return this with
        {
            Title = Title + string.Create(CultureInfo.InvariantCulture, $", from {from}"),
            Series = Series.Select(s => s with { Points = s.Points.Where(p => p.Period.Year >= from).ToList() }).ToList(),
        };
    }

    /// <summary>The text alternative: the title and what is drawn, series by series.</summary>
    internal string AltText()
    {
        var shown = Series.Where(s => !s.Hidden && s.Points.Count > 0).ToList();
        if (shown.Count == 0)
        {
            return Title + ": no data to chart.";
        }
        var periods = shown.SelectMany(s => s.Points).Select(p => p.Period).ToList();
        return $"{Title}{(Unit.Length > 0 ? " (" + Unit + ")" : "")}, {periods.Min()} to {periods.Max()}: {string.Join("; ", shown.Select(s => s.Label))}.";
    }

    /// <summary>Draws the chart as vectors (text stays text) into a rectangle of a PDF page.</summary>
    public void Draw(XGraphics gfx, XRect area)
    {
        var state = gfx.Save();
        gfx.TranslateTransform(area.X, area.Y);
        foreach (var s in Layout(area.Width, area.Height))
        {
            s.Draw(gfx);
        }
        gfx.Restore(state);
    }

    internal static string Inv(FormattableString f) => f.ToString(CultureInfo.InvariantCulture);

    internal static string Esc(string s) => WebUtility.HtmlEncode(s);
}

/// <summary>A primitive of a laid-out chart, drawn the same way to SVG and to PDF.</summary>
public abstract record Shape
{
    /// <summary>The key of the series the shape belongs to (<see cref="ChartSeries.Key"/>), or null.</summary>
    public string? Series { get; init; }

    /// <summary>True when the shape's series is hidden until the reader shows it (SVG only).</summary>
    public bool Hidden { get; init; }

    public abstract string ToSvg();

    public abstract void Draw(XGraphics gfx);

    protected static XColor ToColor(string hex, double opacity = 1)
    {
        var rgb = int.Parse(hex.TrimStart('#'), NumberStyles.HexNumber, CultureInfo.InvariantCulture);
        return XColor.FromArgb((int)Math.Round(opacity * 255), (rgb >> 16) & 0xFF, (rgb >> 8) & 0xFF, rgb & 0xFF);
    }
}

public sealed record PolylineShape(IReadOnlyList<(double X, double Y)> Points, string Colour, double Width, bool Dashed) : Shape
{
    public override string ToSvg() => ChartModel.Inv($"<polyline fill=\"none\" stroke=\"{Colour}\" stroke-width=\"{Width:0.#}\"{(Dashed ? " stroke-dasharray=\"5,4\"" : "")} points=\"{string.Join(' ', Points.Select(p => ChartModel.Inv($"{p.X:0.#},{p.Y:0.#}")))}\"/>");

    public override void Draw(XGraphics gfx)
    {
        var pen = new XPen(ToColor(Colour), Width) { DashStyle = Dashed ? XDashStyle.Dash : XDashStyle.Solid };
        gfx.DrawLines(pen, Points.Select(p => new XPoint(p.X, p.Y)).ToArray());
    }
}

public sealed record RectShape(double X, double Y, double Width, double Height, string Fill, double Opacity, string? Tooltip = null) : Shape
{
    public override string ToSvg() => ChartModel.Inv($"<rect x=\"{X:0.#}\" y=\"{Y:0.#}\" width=\"{Width:0.#}\" height=\"{Height:0.#}\" fill=\"{Fill}\" fill-opacity=\"{Opacity:0.##}\">{(Tooltip is null ? "" : "<title>" + ChartModel.Esc(Tooltip) + "</title>")}</rect>");

    public override void Draw(XGraphics gfx) => gfx.DrawRectangle(new XSolidBrush(ToColor(Fill, Opacity)), X, Y, Width, Height);
}

public sealed record DotShape(double X, double Y, double Radius, string Fill, string? Tooltip = null) : Shape
{
    public override string ToSvg() => ChartModel.Inv($"<circle cx=\"{X:0.#}\" cy=\"{Y:0.#}\" r=\"{Radius:0.#}\" fill=\"{Fill}\">{(Tooltip is null ? "" : "<title>" + ChartModel.Esc(Tooltip) + "</title>")}</circle>");

    public override void Draw(XGraphics gfx) => gfx.DrawEllipse(new XSolidBrush(ToColor(Fill)), X - Radius, Y - Radius, 2 * Radius, 2 * Radius);
}

public sealed record LineShape(double X1, double Y1, double X2, double Y2, string Colour, double Width) : Shape
{
    public override string ToSvg() => ChartModel.Inv($"<line x1=\"{X1:0.#}\" y1=\"{Y1:0.#}\" x2=\"{X2:0.#}\" y2=\"{Y2:0.#}\" stroke=\"{Colour}\" stroke-width=\"{Width:0.#}\"/>");

    public override void Draw(XGraphics gfx) => gfx.DrawLine(new XPen(ToColor(Colour), Width), X1, Y1, X2, Y2);
}

/// <summary>Text at a point; Anchor is start, middle or end (as in SVG); Y is the baseline.</summary>
public sealed record TextShape(double X, double Y, string Text, double Size, string Anchor, string Colour = "#333333", bool Bold = false) : Shape
{
    public override string ToSvg() => ChartModel.Inv($"<text x=\"{X:0.#}\" y=\"{Y:0.#}\" font-size=\"{Size:0.#}\" text-anchor=\"{Anchor}\" fill=\"{Colour}\"{(Bold ? " font-weight=\"bold\"" : "")}>{ChartModel.Esc(Text)}</text>");

    public override void Draw(XGraphics gfx)
    {
        var font = new XFont(ReportFonts.Family, Size, Bold ? XFontStyleEx.Bold : XFontStyleEx.Regular);
        var w = gfx.MeasureString(Text, font).Width;
        var x = Anchor switch { "middle" => X - (w / 2), "end" => X - w, _ => X };
        gfx.DrawString(Text, font, new XSolidBrush(ToColor(Colour)), x, Y, XStringFormats.BaseLineLeft);
    }
}

/// <summary>Text sizes and the spacing that depends on them, as a multiple (<paramref name="TextScale"/>) of the printed ones.</summary>
internal sealed record ChartStyle(double TextScale)
{
    public double Title => 10 * TextScale;

    public double Label => 8 * TextScale;

    public double TitleLine => 13 * TextScale;

    public double LegendRow => 16 * TextScale;

    public double AxisHeight => 22 * TextScale;

    /// <summary>An estimate of a text's width (DejaVu Sans averages about 0.58 em a character).</summary>
    public static double TextWidth(string text, double size) => text.Length * size * 0.58;
}

/// <summary>Lays a <see cref="ChartModel"/> out into shapes.</summary>
internal static class ChartLayout
{
    private const double Right = 12;

    /// <summary>A period's position in time: the middle of its year or quarter, in years.</summary>
    public static double TimeOf(Period p) => p.IsYear ? p.Year + 0.5 : p.Year + ((p.Quarter - 0.5) / 4.0);

    /// <summary>The spacing of consecutive periods of the same kind, in years.</summary>
    private static double StepOf(Period p) => p.IsYear ? 1 : 0.25;

    /// <summary>The number of legend rows at a width: the shown series, and with <paramref name="withHidden"/> the hidden ones too.</summary>
    public static int LegendRowCount(ChartModel model, double width, ChartStyle style, bool withHidden)
    {
        LegendEntries(LegendSeries(model, withHidden), width, style, out var rows);
        return rows;
    }

    /// <summary>The series in the legend, in order: the shown ones, then (with <paramref name="withHidden"/>) the hidden ones.</summary>
    private static List<ChartSeries> LegendSeries(ChartModel model, bool withHidden) =>
        [.. model.Series.Where(s => !s.Hidden), .. withHidden ? model.Series.Where(s => s.Hidden) : []];

    /// <summary>The title (with its unit) broken into lines that fit the width.</summary>
    public static IReadOnlyList<string> TitleLines(ChartModel model, double width, ChartStyle style)
    {
        var text = model.Unit.Length > 0 ? $"{model.Title} ({model.Unit})" : model.Title;
        var perLine = Math.Max(12, (int)((width - 8 - Right) / (style.Title * 0.62)));
        var lines = new List<string>();
        var line = "";
        foreach (var word in text.Split(' ', StringSplitOptions.RemoveEmptyEntries))
        {
            if (line.Length > 0 && line.Length + 1 + word.Length > perLine)
            {
                lines.Add(line);
                line = word;
            }
            else
            {
                line = line.Length == 0 ? word : line + " " + word;
            }
        }
        lines.Add(line);
        return lines;
    }

    /// <summary>The left margin: room for the longest value label.</summary>
    private static double LeftOf(ChartModel model, ChartStyle style)
    {
        var values = model.Series.SelectMany(s => s.Points).SelectMany(p => new[] { p.Value, p.Low ?? p.Value, p.High ?? p.Value }).Where(double.IsFinite).ToList();
        if (values.Count == 0)
        {
            return 8;
        }
        var (_, _, ticks) = NiceScale(values.Min(), values.Max());
        var widest = ticks.Max(t => ChartStyle.TextWidth(Number(t, model.Decimals), style.Label));
        return Math.Max(30, widest + 12);
    }

    /// <summary>The shapes; <paramref name="withHidden"/> draws the hidden series too (marked hidden), scales the axis to them and gives them legend entries.</summary>
    public static IReadOnlyList<Shape> Build(ChartModel model, double width, double height, bool withHidden, ChartStyle style)
    {
        var shapes = new List<Shape>();
        var drawn = model.Series.Where(s => withHidden || !s.Hidden).ToList();
        var points = drawn.SelectMany(s => s.Points).ToList();
        var left = LeftOf(model, style);
        var titleLines = TitleLines(model, width, style);
        for (var i = 0; i < titleLines.Count; i++)
        {
            shapes.Add(new TextShape(8, (14 * style.TextScale) + (i * style.TitleLine), titleLines[i], style.Title, "start", "#222222", Bold: true));
        }
        var top = (26 * style.TextScale) + ((titleLines.Count - 1) * style.TitleLine);
        var values = points.SelectMany(p => new[] { p.Value, p.Low ?? p.Value, p.High ?? p.Value }).Where(double.IsFinite).ToList();
        if (points.Count == 0 || values.Count == 0)
        {
            shapes.Add(new TextShape(width / 2, height / 2, "No data to chart.", 9 * style.TextScale, "middle", "#595959"));
            return shapes;
        }

        // The legend: as many entries per row as fit, below the axis.
        var legend = LegendEntries(LegendSeries(model, withHidden), width, style, out var legendRows);
        var plotBottom = height - style.AxisHeight - (legendRows * style.LegendRow) - 4;
        var (min, max, ticks) = NiceScale(values.Min(), values.Max());
        var t0 = points.Min(p => TimeOf(p.Period)) - 0.5;
        var t1 = points.Max(p => TimeOf(p.Period)) + 0.5;
        double X(double t) => left + ((t - t0) / (t1 - t0) * (width - left - Right));
        double Y(double v) => top + ((max - v) / (max - min) * (plotBottom - top));

        foreach (var tick in ticks)
        {
            shapes.Add(new LineShape(left, Y(tick), width - Right, Y(tick), "#e3e3e3", 0.6));
            shapes.Add(new TextShape(left - 5, Y(tick) + (style.Label * 0.38), Number(tick, model.Decimals), style.Label, "end", "#4d4d4d"));
        }
        shapes.Add(new LineShape(left, plotBottom, width - Right, plotBottom, "#999999", 0.8));
        var firstYear = (int)Math.Floor(t0 + 0.5);
        var lastYear = (int)Math.Floor(t1 - 0.5);
        var every = Math.Max(1, (int)Math.Ceiling((lastYear - firstYear + 1) / ((width - left - Right) / (ChartStyle.TextWidth("2000", style.Label) + (8 * style.TextScale)))));
        for (var y = firstYear; y <= lastYear; y++)
        {
            shapes.Add(new LineShape(X(y), plotBottom, X(y), plotBottom + 3, "#999999", 0.6));
            if ((y - firstYear) % every == 0)
            {
                shapes.Add(new TextShape(X(y + 0.5), plotBottom + (13 * style.TextScale), y.ToString(CultureInfo.InvariantCulture), style.Label, "middle", "#4d4d4d"));
            }
        }

        var slots = Math.Max(1, drawn.Count(x => x.Kind == SeriesKind.Band));
        var bandWidth = Math.Max(2.5, Math.Min(12, (width - left - Right) / Math.Max(1, (t1 - t0) / points.Min(p => StepOf(p.Period))) * 0.8 / slots));
        // Band series side by side within a period, so that rounds and the consensus do not hide each other.
        var bands = drawn.Where(x => x.Kind == SeriesKind.Band).ToList();
        foreach (var s in drawn)
        {
            void Add(Shape shape) => shapes.Add(s.Key is null ? shape : shape with { Series = s.Key, Hidden = s.Hidden });
            var ordered = s.Points.OrderBy(p => p.Period).ToList();
            if (s.Kind == SeriesKind.Band)
            {
                var offset = (bands.IndexOf(s) - ((bands.Count - 1) / 2.0)) * bandWidth * 1.1;
                foreach (var p in ordered.Where(p => double.IsFinite(p.Value)))
                {
                    var x = X(TimeOf(p.Period)) + offset;
                    // A value without a band (a single-value answer among ranges) is the dot alone.
                    if (p.Low is { } low && p.High is { } high)
                    {
                        var rectTop = Y(high);
                        Add(new RectShape(x - (bandWidth / 2), rectTop, bandWidth, Math.Max(0.8, Y(low) - rectTop), s.Colour, 0.35,
                            $"{s.Label} {p.Period}: {Number(low, model.Decimals)} to {Number(high, model.Decimals)}"));
                    }
                    Add(new DotShape(x, Y(p.Value), 2.6, s.Colour, $"{s.Label} {p.Period}: {Number(p.Value, model.Decimals)}"));
                }
                continue;
            }
            // A line breaks where a period is missing: a gap, not a step.
            var run = new List<(double, double)>();
            for (var i = 0; i < ordered.Count; i++)
            {
                var p = ordered[i];
                if (i > 0 && TimeOf(p.Period) - TimeOf(ordered[i - 1].Period) > StepOf(p.Period) + 1e-9)
                {
                    Flush(run, s, Add);
                }
                run.Add((X(TimeOf(p.Period)), Y(p.Value)));
                Add(new DotShape(X(TimeOf(p.Period)), Y(p.Value), 1.8, s.Colour, $"{s.Label} {p.Period}: {Number(p.Value, model.Decimals)}"));
            }
            Flush(run, s, Add);
        }

        var ly = plotBottom + style.AxisHeight + (8 * style.TextScale);
        foreach (var (s, x, row) in legend)
        {
            var y = ly + (row * style.LegendRow);
            var k = style.TextScale;
            // A legend entry goes with its series: a control that shows or hides the series shows or hides its entry too.
            void Add(Shape shape) => shapes.Add(s.Key is null ? shape : shape with { Series = s.Key, Hidden = s.Hidden });
            if (s.Kind == SeriesKind.Band)
            {
                Add(new RectShape(x, y - (8 * k), 10 * k, 10 * k, s.Colour, 0.35));
                Add(new DotShape(x + (5 * k), y - (3 * k), 2.2 * k, s.Colour));
            }
            else
            {
                Add(new PolylineShape([(x, y - (3 * k)), (x + (16 * k), y - (3 * k))], s.Colour, 2, s.Dashed));
            }
            Add(new TextShape(x + (20 * k), y, s.Label, style.Label, "start", "#333333"));
        }
        return shapes;
    }

    private static void Flush(List<(double X, double Y)> run, ChartSeries s, Action<Shape> add)
    {
        if (run.Count > 1)
        {
            add(new PolylineShape(run.ToList(), s.Colour, 1.8, s.Dashed));
        }
        run.Clear();
    }

    private static List<(ChartSeries Series, double X, int Row)> LegendEntries(IReadOnlyList<ChartSeries> series, double width, ChartStyle style, out int rows)
    {
        var list = new List<(ChartSeries, double, int)>();
        // The legend starts at the drawing's left edge, as the title does: on a narrow drawing every character counts.
        var start = 8 * style.TextScale;
        var x = start;
        var row = 0;
        foreach (var s in series)
        {
            var w = (34 * style.TextScale) + ChartStyle.TextWidth(s.Label, style.Label);
            if (x + w > width - Right && x > start)
            {
                row++;
                x = start;
            }
            list.Add((s, x, row));
            x += w;
        }
        rows = series.Count == 0 ? 0 : row + 1;
        return list;
    }

    /// <summary>Axis limits and ticks at 1, 2 or 5 times a power of ten, about five of them.</summary>
    internal static (double Min, double Max, IReadOnlyList<double> Ticks) NiceScale(double lo, double hi)
    {
        // A flat or nearly flat set of values (differences at the last bits of a double) gets a
        // padded range, so the step can never be too small to advance.
        if (hi - lo <= 1e-9 * Math.Max(1, Math.Max(Math.Abs(lo), Math.Abs(hi))))
        {
            var pad = lo == 0 ? 1 : Math.Abs(lo) * 0.05;
            (lo, hi) = (lo - pad, hi + pad);
        }
        var raw = (hi - lo) / 5;
        var magnitude = Math.Pow(10, Math.Floor(Math.Log10(raw)));
        var step = new[] { 1, 2, 2.5, 5, 10 }.Select(f => f * magnitude).First(s => s >= raw);
        var first = Math.Floor(lo / step);
        var last = Math.Ceiling(hi / step);
        var ticks = new List<double>();
        // An integer count of steps (at most a dozen), never an accumulated floating-point sum.
        for (var k = first; k <= last && ticks.Count < 12; k++)
        {
            ticks.Add(k * step);
        }
        return (first * step, last * step, ticks);
    }

    internal static string Number(double v, int decimals) => NumberText.Fixed(v, decimals);
}
