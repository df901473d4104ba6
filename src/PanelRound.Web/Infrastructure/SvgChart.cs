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
    private const int W = 640, H = 220, L = 56, R = 12, T = 12, B = 28;

    public sealed record Band(string Label, double Low, double Mid, double High);

    public sealed record Line(string Name, string Colour, IReadOnlyList<(string X, double? Y)> Points, bool Dashed = false);

    /// <summary>Lines over shared x labels, with optional bands (low-high shaded, mid as a dot).</summary>
    public static HtmlString Lines(IReadOnlyList<string> xs, IReadOnlyList<Line> lines, IReadOnlyList<(string Colour, IReadOnlyList<Band> Bands)>? bands = null, string? title = null, int decimals = 0)
    {
        var values = lines.SelectMany(l => l.Points.Where(p => p.Y.HasValue).Select(p => p.Y!.Value))
            .Concat(bands?.SelectMany(b => b.Bands.SelectMany(x => new[] { x.Low, x.High })) ?? []).ToList();
        if (xs.Count == 0 || values.Count == 0)
        {
            return new HtmlString("<p class=\"text-muted small\">No data to chart.</p>");
        }
        var (min, max) = Pad(values.Min(), values.Max());
        double X(int i) => L + (xs.Count == 1 ? (W - L - R) / 2.0 : i * (W - L - R) / (double)(xs.Count - 1));
        double Y(double v) => T + (max - v) / (max - min) * (H - T - B);
        var sb = Start(title);
        Axes(sb, min, max, decimals, Y);
        var step = Math.Max(1, xs.Count / 12);
        for (var i = 0; i < xs.Count; i += step)
        {
            sb.Append(Inv($"<text x=\"{X(i):0.#}\" y=\"{H - 8}\" font-size=\"10\" text-anchor=\"middle\" fill=\"#555\">{Esc(xs[i])}</text>"));
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
        Legend(sb, lines.Select(l => (l.Name, l.Colour)).ToList());
        return End(sb);
    }

    /// <summary>A histogram of round feedback (bins with counts).</summary>
    public static HtmlString Histogram(IReadOnlyList<(double Lower, double Upper, int Count)> bins, int decimals = 0, double? marker = null, string? markerLabel = null)
    {
        if (bins.Count == 0)
        {
            return new HtmlString("");
        }
        const int w = 300, h = 110, l = 8, r = 8, t = 8, b = 22;
        var maxCount = Math.Max(1, bins.Max(x => x.Count));
        var lo = bins[0].Lower;
        var hi = bins[^1].Upper;
        if (hi <= lo)
        {
            hi = lo + 1;
        }
        double X(double v) => l + (v - lo) / (hi - lo) * (w - l - r);
        var sb = new StringBuilder(Inv($"<svg viewBox=\"0 0 {w} {h}\" role=\"img\" class=\"chart\" xmlns=\"http://www.w3.org/2000/svg\">"));
        foreach (var bin in bins)
        {
            var x1 = X(bin.Lower);
            var x2 = bins.Count == 1 && bin.Upper <= bin.Lower ? x1 + 20 : X(bin.Upper);
            var bh = bin.Count / (double)maxCount * (h - t - b);
            sb.Append(Inv($"<rect x=\"{x1:0.#}\" y=\"{h - b - bh:0.#}\" width=\"{Math.Max(1, x2 - x1 - 1):0.#}\" height=\"{bh:0.#}\" fill=\"#6c8ebf\"><title>{F(bin.Lower, decimals)} to {F(bin.Upper, decimals)}: {bin.Count}</title></rect>"));
        }
        sb.Append(Inv($"<text x=\"{l}\" y=\"{h - 6}\" font-size=\"10\" fill=\"#555\">{F(lo, decimals)}</text><text x=\"{w - r}\" y=\"{h - 6}\" font-size=\"10\" text-anchor=\"end\" fill=\"#555\">{F(hi, decimals)}</text>"));
        if (marker is { } m && m >= lo && m <= hi)
        {
            sb.Append(Inv($"<line x1=\"{X(m):0.#}\" x2=\"{X(m):0.#}\" y1=\"{t}\" y2=\"{h - b}\" stroke=\"#c0392b\" stroke-width=\"2\"><title>{Esc(markerLabel ?? "")}: {F(m, decimals)}</title></line>"));
        }
        sb.Append("</svg>");
        return new HtmlString(sb.ToString());
    }

    private static StringBuilder Start(string? title)
    {
        var sb = new StringBuilder(Inv($"<svg viewBox=\"0 0 {W} {H}\" role=\"img\" class=\"chart\" xmlns=\"http://www.w3.org/2000/svg\">"));
        if (title is not null)
        {
            sb.Append("<title>").Append(Esc(title)).Append("</title>");
        }
        return sb;
    }

    private static HtmlString End(StringBuilder sb) => new(sb.Append("</svg>").ToString());

    private static void Axes(StringBuilder sb, double min, double max, int decimals, Func<double, double> y)
    {
        for (var k = 0; k <= 4; k++)
        {
            var v = min + k * (max - min) / 4;
            sb.Append(Inv($"<line x1=\"{L}\" x2=\"{W - R}\" y1=\"{y(v):0.#}\" y2=\"{y(v):0.#}\" stroke=\"#e3e3e3\"/>"));
            sb.Append(Inv($"<text x=\"{L - 4}\" y=\"{y(v) + 3:0.#}\" font-size=\"10\" text-anchor=\"end\" fill=\"#555\">{F(v, decimals)}</text>"));
        }
    }

    private static void Legend(StringBuilder sb, IReadOnlyList<(string Name, string Colour)> items)
    {
        var x = L + 4.0;
        foreach (var (name, colour) in items)
        {
            sb.Append(Inv($"<rect x=\"{x:0.#}\" y=\"{T}\" width=\"10\" height=\"3\" fill=\"{colour}\"/><text x=\"{x + 14:0.#}\" y=\"{T + 5}\" font-size=\"10\" fill=\"#333\">{Esc(name)}</text>"));
            x += 24 + name.Length * 5.5;
        }
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
