using System.Globalization;
using System.Net;
using System.Text;
using Microsoft.AspNetCore.Html;
using PanelRound.Core.Domain;
using PanelRound.Core.Scoring;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Scorecard;

/// <summary>How the scorecard pages write numbers, bias directions and the forecast chart.</summary>
public static class ScorecardFormat
{
    public const string Dash = NumberText.Missing;

    public static string Number(double? value, int decimals = 2) => NumberText.Fixed(value, decimals);

    public static string Signed(double? value, int decimals = 2) => NumberText.Signed(value, decimals);

    public static string Percent(double? share) => NumberText.Percent(share, 0);

    /// <summary>A calibration score, information or weight: three decimals, or scientific notation below 0.001.</summary>
    public static string Score(double value) =>
        double.IsFinite(value) ? value.ToString(value != 0 && Math.Abs(value) < 0.001 ? "0.00E+0" : "0.000", CultureInfo.InvariantCulture) : Dash;

    /// <summary>The bias direction in words.</summary>
    public static string Bias(BiasDirection? bias) => bias switch
    {
        BiasDirection.OverForecasts => "over-forecasts (optimistic for prices and rents)",
        BiasDirection.UnderForecasts => "under-forecasts (pessimistic for prices and rents)",
        BiasDirection.Neutral => "no clear lean",
        _ => Dash,
    };

    /// <summary>Round 1 to final: negative scaled change means the rounds improved the forecasts; one that rounds to zero is neither.</summary>
    public static string Change(double? change)
    {
        var text = Signed(change);
        return text.StartsWith('-') ? text + " (better)" : text.StartsWith('+') ? text + " (worse)" : text;
    }

    /// <summary>
    /// A server-rendered SVG of an expert's final-round forecasts of one indicator (dots, with the
    /// P10-P90 range as a bar) against the observed series (line), by period.
    /// </summary>
    public static IHtmlContent Chart(IndicatorTrack track)
    {
        const double width = 720, height = 280, left = 70, right = 16, top = 16, bottom = 40;
        var periods = track.Observed.Select(o => o.Period).Concat(track.Final.Select(f => Period.Parse(f.Item.Period))).Distinct().Order().ToList();
        var values = track.Observed.Select(o => o.Value)
            .Concat(track.Final.SelectMany(f => new[] { f.Item.Point, f.Item.P10 ?? f.Item.Point, f.Item.P90 ?? f.Item.Point, f.Item.Outcome }))
            .ToList();
        if (periods.Count == 0 || values.Count == 0)
        {
            return HtmlString.Empty;
        }
        var (min, max) = (values.Min(), values.Max());
        if (max - min < 1e-9)
        {
            (min, max) = (min - 1, max + 1);
        }
        var pad = 0.06 * (max - min);
        (min, max) = (min - pad, max + pad);
        var index = periods.Select((p, i) => (p, i)).ToDictionary(x => x.p, x => x.i);
        double X(Period p) => left + (periods.Count == 1 ? 0.5 : index[p] / (double)(periods.Count - 1)) * (width - left - right);
        double Y(double v) => top + (1 - (v - min) / (max - min)) * (height - top - bottom);
        string F(double v) => v.ToString("0.#", CultureInfo.InvariantCulture);

        var panels = track.Final.Select(f => f.Panel.Key).Distinct(StringComparer.Ordinal).ToList();
        var svg = new StringBuilder();
        svg.Append(CultureInfo.InvariantCulture, $"<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {F(width)} {F(height)}\" class=\"w-100 track-chart\" role=\"img\" aria-label=\"{Encode(track.Name)}: final-round forecasts against the observed series\">");
        for (var t = 0; t <= 4; t++)
        {
            var v = min + t * (max - min) / 4;
            svg.Append(CultureInfo.InvariantCulture, $"<line x1=\"{F(left)}\" x2=\"{F(width - right)}\" y1=\"{F(Y(v))}\" y2=\"{F(Y(v))}\" stroke=\"#dee2e6\"/>");
            svg.Append(CultureInfo.InvariantCulture, $"<text x=\"{F(left - 6)}\" y=\"{F(Y(v) + 4)}\" font-size=\"11\" text-anchor=\"end\" fill=\"#6c757d\">{Encode(Number(v, track.Decimals))}</text>");
        }
        var step = Math.Max(1, (int)Math.Ceiling(periods.Count / 12.0));
        for (var i = 0; i < periods.Count; i += step)
        {
            svg.Append(CultureInfo.InvariantCulture, $"<text x=\"{F(X(periods[i]))}\" y=\"{F(height - bottom + 16)}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#6c757d\">{periods[i]}</text>");
        }
        if (track.Observed.Count > 0)
        {
            var points = string.Join(" ", track.Observed.Select(o => $"{F(X(o.Period))},{F(Y(o.Value))}"));
            svg.Append(CultureInfo.InvariantCulture, $"<polyline points=\"{points}\" fill=\"none\" stroke=\"#212529\" stroke-width=\"2\"/>");
            foreach (var o in track.Observed)
            {
                svg.Append(CultureInfo.InvariantCulture, $"<circle cx=\"{F(X(o.Period))}\" cy=\"{F(Y(o.Value))}\" r=\"2.5\" fill=\"#212529\"><title>{o.Period} observed {Encode(Number(o.Value, track.Decimals))}</title></circle>");
            }
        }
        foreach (var f in track.Final)
        {
            var offset = panels.Count <= 1 ? 0 : (panels.IndexOf(f.Panel.Key) - (panels.Count - 1) / 2.0) * 7;
            var x = X(Period.Parse(f.Item.Period)) + offset;
            if (f.Item is { P10: { } l, P90: { } h })
            {
                svg.Append(CultureInfo.InvariantCulture, $"<line x1=\"{F(x)}\" x2=\"{F(x)}\" y1=\"{F(Y(l))}\" y2=\"{F(Y(h))}\" stroke=\"#0d6efd\" stroke-width=\"3\" stroke-opacity=\"0.35\"/>");
            }
            svg.Append(CultureInfo.InvariantCulture, $"<circle cx=\"{F(x)}\" cy=\"{F(Y(f.Item.Point))}\" r=\"4\" fill=\"#0d6efd\"><title>{Encode(f.Panel.Title)}, {f.Item.Period}: forecast {Encode(Number(f.Item.Point, track.Decimals))}, outcome {Encode(Number(f.Item.Outcome, track.Decimals))}</title></circle>");
        }
        svg.Append(CultureInfo.InvariantCulture, $"<text x=\"{F(left)}\" y=\"{F(height - 6)}\" font-size=\"11\" fill=\"#212529\">— observed ({Encode(track.Unit)})</text>");
        svg.Append(CultureInfo.InvariantCulture, $"<text x=\"{F(left + 200)}\" y=\"{F(height - 6)}\" font-size=\"11\" fill=\"#0d6efd\">● final-round forecast (bar: P10 to P90)</text>");
        svg.Append("</svg>");
        return new HtmlString(svg.ToString());
    }

    private static string Encode(string text) => WebUtility.HtmlEncode(text);
}
