using System.Globalization;
using Microsoft.AspNetCore.Html;
using PanelRound.Core.Domain;
using PanelRound.Core.Forecasting;
using PanelRound.Core.Scoring;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Reports;

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
        double.IsFinite(value) ? NumberText.Format(value, value != 0 && Math.Abs(value) < 0.001 ? "0.00E+0" : "0.000") : Dash;

    /// <summary>A number for a sortable table's <c>data-sort-value</c> (invariant, full precision); empty when there is none, so it sorts last.</summary>
    public static string SortValue(double? value) => value is { } v && double.IsFinite(v) ? v.ToString("R", CultureInfo.InvariantCulture) : "";

    /// <summary>A benchmark's name from its scorecard key (<c>benchmark:holt</c>), in words (the method's own description).</summary>
    public static string BenchmarkName(string key) =>
        key.StartsWith(BenchmarkScoring.KeyPrefix, StringComparison.Ordinal) && BenchmarkMethods.TryParse(key[BenchmarkScoring.KeyPrefix.Length..], out var method)
            // The mean's window is each panel's setting, so the pooled name does not state one.
            ? method.Value == BenchmarkMethod.MeanOfLastK ? "Mean of the last observations (the panel's window)" : BenchmarkMethods.Describe(method.Value)
            : key;

    /// <summary>The bias direction in words.</summary>
    public static string Bias(BiasDirection? bias) => bias switch
    {
        BiasDirection.OverForecasts => "over-forecasts (optimistic for prices and rents)",
        BiasDirection.UnderForecasts => "under-forecasts (pessimistic for prices and rents)",
        BiasDirection.Neutral => "no clear lean",
        _ => Dash,
    };

    /// <summary>The bias direction in a word or two, for a table whose header explains it.</summary>
    public static string BiasShort(BiasDirection? bias) => bias switch
    {
        BiasDirection.OverForecasts => "over-forecasts",
        BiasDirection.UnderForecasts => "under-forecasts",
        BiasDirection.Neutral => "no clear lean",
        _ => Dash,
    };

    /// <summary>Round 1 to final: negative scaled change means the rounds improved the forecasts; one that rounds to zero is neither.</summary>
    public static string Change(double? change)
    {
        var text = Signed(change);
        return text.StartsWith('-') ? text + " (better)" : text.StartsWith('+') ? text + " (worse)" : text;
    }

    /// <summary>The colours of the panels on a track chart, in the order the panels closed.</summary>
    private static readonly string[] PanelColours = ["#0d6efd", "#d95f02", "#7570b3", "#1b9e77", "#e7298a", "#66a61e"];

    /// <summary>
    /// The chart of an expert's final-round forecasts of one indicator against the observed series, on the one chart model
    /// (a real time axis, a legend entry per series): the observed values as a line, and each panel's forecasts as dots
    /// with the P10-P90 range as a shaded bar, in a colour of the panel's own.
    /// </summary>
    public static ChartModel TrackChart(IndicatorTrack track)
    {
        var series = new List<ChartSeries>();
        if (track.Observed.Count > 0)
        {
            series.Add(new ChartSeries("Observed (the outcomes among them)", SeriesKind.Line, "#212529",
                track.Observed.Select(o => new ChartPoint(o.Period, o.Value)).ToList()));
        }
        var panels = track.Final.GroupBy(f => f.Panel.Key, StringComparer.Ordinal).OrderBy(g => g.First().Panel.ClosedOn).ToList();
        for (var i = 0; i < panels.Count; i++)
        {
            var forecasts = panels[i].ToList();
            var ranges = forecasts.Any(f => f.Item.P10 is not null && f.Item.P90 is not null);
            series.Add(new ChartSeries($"Forecast in {forecasts[0].Panel.Title} ({(ranges ? "dot; bar: P10 to P90" : "dot")})", SeriesKind.Band, PanelColours[i % PanelColours.Length],
                forecasts.Select(f => new ChartPoint(Period.Parse(f.Item.Period), f.Item.Point, f.Item.P10, f.Item.P90)).ToList()));
        }
        return new ChartModel(track.Name, track.Unit, track.Decimals, series);
    }

    /// <summary>The track chart for the page (a wide and a phone drawing, <see cref="ChartModel.ToResponsiveSvg"/>).</summary>
    public static IHtmlContent Chart(IndicatorTrack track) =>
        track.Observed.Count == 0 && track.Final.Count == 0
            ? HtmlString.Empty
            : new HtmlString("<div class=\"chart track-chart-box\">" + TrackChart(track).ToResponsiveSvg(640, 270) + "</div>");

}
