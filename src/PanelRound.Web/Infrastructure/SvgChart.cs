using System.Globalization;
using System.Net;
using System.Text;
using Microsoft.AspNetCore.Html;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Small server-rendered SVG charts (no script, no external assets): a line chart of a series,
/// a histogram, and a band chart of medians with their interquartile band.
/// </summary>
public static class SvgChart
{
    private const int B = 28;

    /// <summary>The drawing's own size (its viewBox) and its font size: text renders at FontSize × the shown width / Width.</summary>
    public sealed record ChartSize(int Width, int Height, int FontSize);

    /// <summary>The default line chart, shown about 640 to 720 pixels wide.</summary>
    public static readonly ChartSize Wide = new(640, 220, 10);

    /// <summary>A line chart drawn for a phone (shown about 320 to 360 pixels wide), so that its text stays readable there.</summary>
    public static readonly ChartSize Narrow = new(340, 240, 12);

    public sealed record Band(string Label, double Low, double Mid, double High);

    public sealed record Line(string Name, string Colour, IReadOnlyList<(string X, double? Y)> Points, bool Dashed = false);

    /// <summary>
    /// Lines over shared x labels, with optional bands (low-high shaded, mid as a dot), drawn at
    /// <c>size</c> (default <see cref="Wide"/>): x labels are thinned and the legend wrapped to fit it.
    /// Numbers are written by <c>format</c> when given, else with <c>decimals</c> in the invariant culture.
    /// </summary>
    public static HtmlString Lines(IReadOnlyList<string> xs, IReadOnlyList<Line> lines, IReadOnlyList<(string Colour, IReadOnlyList<Band> Bands)>? bands = null, string? title = null, int decimals = 0, ChartSize? size = null, Func<double, string>? format = null)
    {
        var values = lines.SelectMany(l => l.Points.Where(p => p.Y.HasValue).Select(p => p.Y!.Value))
            .Concat(bands?.SelectMany(b => b.Bands.SelectMany(x => new[] { x.Low, x.High })) ?? []).ToList();
        if (xs.Count == 0 || values.Count == 0)
        {
            return new HtmlString("<p class=\"text-muted small\">No data to chart.</p>");
        }
        var s = size ?? Wide;
        var (w, h, font) = (s.Width, s.Height, s.FontSize);
        string F(double v, int d) => format is null ? SvgChart.F(v, d) : format(v);
        var (min, max) = Pad(values.Min(), values.Max());
        // The left margin holds the longest y label; the legend rows sit above the plot, not over it.
        var yLabels = Enumerable.Range(0, 5).Select(k => F(min + k * (max - min) / 4, decimals)).ToList();
        var left = (int)Math.Ceiling(yLabels.Max(y => y.Length) * font * 0.62) + 8;
        // The right margin holds half of the last x label, centred on the last point.
        var labelWidth = xs.Max(x => x.Length) * font * 0.62 + font;
        var right = Math.Max(12, (int)Math.Ceiling(labelWidth / 2));
        var legend = LegendLayout(lines.Select(x => (x.Name, x.Colour)).ToList(), left, w - right, font);
        var t = 8 + legend.Rows * (font + 4);
        double X(int i) => left + (xs.Count == 1 ? (w - left - right) / 2.0 : i * (w - left - right) / (double)(xs.Count - 1));
        double Y(double v) => t + (max - v) / (max - min) * (h - t - B);
        var sb = Start(title, w, h);
        Axes(sb, min, max, yLabels, Y, left, w - right, font);
        // As many x labels as fit side by side at this size.
        var fit = Math.Max(1, (int)((w - left - right) / labelWidth) + 1);
        var step = Math.Max(1, (int)Math.Ceiling(xs.Count / (double)fit));
        for (var i = 0; i < xs.Count; i += step)
        {
            sb.Append(Inv($"<text x=\"{X(i):0.#}\" y=\"{h - 8}\" font-size=\"{font}\" text-anchor=\"middle\" fill=\"#555\">{Esc(xs[i])}</text>"));
        }
        foreach (var (colour, list) in bands ?? [])
        {
            foreach (var b in list)
            {
                var i = IndexOf(xs, b.Label);
                if (i < 0)
                {
                    continue;
                }
                sb.Append(Inv($"<line x1=\"{X(i):0.#}\" x2=\"{X(i):0.#}\" y1=\"{Y(b.Low):0.#}\" y2=\"{Y(b.High):0.#}\" stroke=\"{colour}\" stroke-width=\"8\" stroke-opacity=\"0.35\"><title>{Esc(b.Label)}: {F(b.Low, decimals)} to {F(b.High, decimals)}</title></line>"));
                sb.Append(Inv($"<circle cx=\"{X(i):0.#}\" cy=\"{Y(b.Mid):0.#}\" r=\"3\" fill=\"{colour}\"><title>{Esc(b.Label)}: {F(b.Mid, decimals)}</title></circle>"));
            }
        }
        foreach (var line in lines)
        {
            var pts = line.Points.Select(p => (i: IndexOf(xs, p.X), p.Y)).Where(p => p.i >= 0 && p.Y.HasValue).ToList();
            if (pts.Count > 1)
            {
                sb.Append(Inv($"<polyline fill=\"none\" stroke=\"{line.Colour}\" stroke-width=\"2\"{(line.Dashed ? " stroke-dasharray=\"5,4\"" : "")} points=\""));
                sb.Append(string.Join(' ', pts.Select(p => Inv($"{X(p.i):0.#},{Y(p.Y!.Value):0.#}"))));
                sb.Append("\"/>");
            }
            foreach (var p in pts)
            {
                sb.Append(Inv($"<circle cx=\"{X(p.i):0.#}\" cy=\"{Y(p.Y!.Value):0.#}\" r=\"2.5\" fill=\"{line.Colour}\"><title>{Esc(line.Name)} {Esc(xs[p.i])}: {F(p.Y.Value, decimals)}</title></circle>"));
            }
        }
        foreach (var (name, colour, x, y) in legend.Items)
        {
            sb.Append(Inv($"<rect x=\"{x:0.#}\" y=\"{y - font / 2.0:0.#}\" width=\"10\" height=\"3\" fill=\"{colour}\"/><text x=\"{x + 14:0.#}\" y=\"{y:0.#}\" font-size=\"{font}\" fill=\"#333\">{Esc(name)}</text>"));
        }
        return End(sb);
    }

    /// <summary>A histogram of round feedback (bins with counts), drawn 240 wide with 11-pixel text (readable at its shown width, in a table cell or on a phone).</summary>
    /// <param name="bins">The bars, lowest first.</param>
    /// <param name="decimals">Decimals of the axis numbers.</param>
    /// <param name="marker">A value marked with a red line (e.g. the reader's own answer), when inside the bars.</param>
    /// <param name="markerLabel">What the marker is.</param>
    /// <param name="title">What the histogram shows; with the bars' ranges and counts it is the chart's text alternative.</param>
    /// <param name="format">Writes a number (default: <paramref name="decimals"/> decimals, invariant culture).</param>
    public static HtmlString Histogram(IReadOnlyList<(double Lower, double Upper, int Count)> bins, int decimals = 0, double? marker = null, string? markerLabel = null, string? title = null, Func<double, string>? format = null)
    {
        string F(double v, int d) => format is null ? SvgChart.F(v, d) : format(v);
        if (bins.Count == 0)
        {
            return new HtmlString("");
        }
        const int w = 240, h = 84, l = 6, r = 6, t = 6, b = 20, font = 11;
        var maxCount = Math.Max(1, bins.Max(x => x.Count));
        var lo = bins[0].Lower;
        var hi = bins[^1].Upper;
        if (hi <= lo)
        {
            hi = lo + 1;
        }
        double X(double v) => l + (v - lo) / (hi - lo) * (w - l - r);
        var shown = marker is { } mk && mk >= lo && mk <= hi;
        var description = (title ?? "Histogram") + ": "
            + string.Join("; ", bins.Select(x => $"{F(x.Lower, decimals)} to {F(x.Upper, decimals)}: {x.Count.ToString(CultureInfo.InvariantCulture)}"))
            + (shown ? $"; {markerLabel ?? "marker"}: {F(marker!.Value, decimals)}" : "");
        var sb = new StringBuilder(Inv($"<svg viewBox=\"0 0 {w} {h}\" role=\"img\" aria-label=\"{Esc(description)}\" class=\"chart histogram\" xmlns=\"http://www.w3.org/2000/svg\">"));
        sb.Append("<title>").Append(Esc(description)).Append("</title>");
        foreach (var bin in bins)
        {
            var x1 = X(bin.Lower);
            var x2 = bins.Count == 1 && bin.Upper <= bin.Lower ? x1 + 20 : X(bin.Upper);
            var bh = bin.Count / (double)maxCount * (h - t - b);
            sb.Append(Inv($"<rect x=\"{x1:0.#}\" y=\"{h - b - bh:0.#}\" width=\"{Math.Max(1, x2 - x1 - 1):0.#}\" height=\"{bh:0.#}\" fill=\"#6c8ebf\"><title>{F(bin.Lower, decimals)} to {F(bin.Upper, decimals)}: {bin.Count}</title></rect>"));
        }
        sb.Append(Inv($"<text x=\"{l}\" y=\"{h - 5}\" font-size=\"{font}\" fill=\"#444\">{F(lo, decimals)}</text><text x=\"{w - r}\" y=\"{h - 5}\" font-size=\"{font}\" text-anchor=\"end\" fill=\"#444\">{F(hi, decimals)}</text>"));
        if (shown)
        {
            var m = marker!.Value;
            sb.Append(Inv($"<line x1=\"{X(m):0.#}\" x2=\"{X(m):0.#}\" y1=\"{t}\" y2=\"{h - b}\" stroke=\"#c0392b\" stroke-width=\"2\"><title>{Esc(markerLabel ?? "")}: {F(m, decimals)}</title></line>"));
        }
        sb.Append("</svg>");
        return new HtmlString(sb.ToString());
    }

    private static StringBuilder Start(string? title, int w, int h)
    {
        // A drawing without a title is decoration beside text that says the same; one with a title is named by it.
        var name = title is null ? "aria-hidden=\"true\"" : Inv($"role=\"img\" aria-label=\"{Esc(title)}\"");
        var sb = new StringBuilder(Inv($"<svg viewBox=\"0 0 {w} {h}\" {name} class=\"chart\" xmlns=\"http://www.w3.org/2000/svg\">"));
        if (title is not null)
        {
            sb.Append("<title>").Append(Esc(title)).Append("</title>");
        }
        return sb;
    }

    private static HtmlString End(StringBuilder sb) => new(sb.Append("</svg>").ToString());

    private static void Axes(StringBuilder sb, double min, double max, IReadOnlyList<string> labels, Func<double, double> y, int l, int right, int font)
    {
        for (var k = 0; k <= 4; k++)
        {
            var v = min + k * (max - min) / 4;
            sb.Append(Inv($"<line x1=\"{l}\" x2=\"{right}\" y1=\"{y(v):0.#}\" y2=\"{y(v):0.#}\" stroke=\"#e3e3e3\"/>"));
            sb.Append(Inv($"<text x=\"{l - 4}\" y=\"{y(v) + font * 0.35:0.#}\" font-size=\"{font}\" text-anchor=\"end\" fill=\"#555\">{labels[k]}</text>"));
        }
    }

    /// <summary>Legend items placed left to right from <paramref name="left"/>, wrapped onto a new row where one would pass <paramref name="right"/>.</summary>
    private static (int Rows, List<(string Name, string Colour, double X, double Y)> Items) LegendLayout(IReadOnlyList<(string Name, string Colour)> items, int left, int right, int font)
    {
        var placed = new List<(string, string, double, double)>();
        var x = (double)left;
        var row = 0;
        foreach (var (name, colour) in items)
        {
            var width = 14 + name.Length * font * 0.55;
            if (x > left && x + width > right)
            {
                row++;
                x = left;
            }
            placed.Add((name, colour, x, 8 + font * 0.8 + row * (font + 4)));
            x += width + 10;
        }
        return (items.Count == 0 ? 0 : row + 1, placed);
    }

    private static (double, double) Pad(double min, double max)
    {
        if (max <= min)
        {
            var d = Math.Abs(min) * 0.1 + 1;
            return (min - d, max + d);
        }
        var pad = (max - min) * 0.08;
        return (min - pad, max + pad);
    }

    private static int IndexOf(IReadOnlyList<string> xs, string x)
    {
        for (var i = 0; i < xs.Count; i++)
        {
            if (xs[i] == x)
            {
                return i;
            }
        }
        return -1;
    }

    private static string F(double v, int decimals) => NumberText.Fixed(v, decimals);

    private static string Esc(string s) => WebUtility.HtmlEncode(s);

    private static string Inv(FormattableString s) => s.ToString(CultureInfo.InvariantCulture);
}
