using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Core.Forecasting;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Results;

namespace PanelRound.Web.Features.Benchmarks;

/// <summary>One target period of a benchmark path: the point forecast and its 80% interval (P10 / P90).</summary>
public sealed record BenchmarkPointDto(string Period, int Horizon, double Value, double P10, double P90);

/// <summary>One benchmark of a question: its path, fitted parameters and in-sample one-step errors, or why it is unavailable.</summary>
/// <param name="Method">The key (<c>naive</c>, <c>drift</c>, <c>mean</c>, <c>ses</c>, <c>holt</c>, <c>damped</c>, <c>seasonal-naive</c>); exports write <c>benchmark:&lt;key&gt;</c>.</param>
/// <param name="Name">The method in words.</param>
/// <param name="Available">False when the reference series is too short or the method does not apply.</param>
/// <param name="Reason">Why it is unavailable; null when available.</param>
/// <param name="Parameters">Fitted or fixed parameters by name (alpha, beta, phi, level0, trend0, drift, k, m).</param>
/// <param name="Residuals">The number of in-sample one-step errors.</param>
/// <param name="Sigma">The residual standard deviation σ̂ behind the intervals.</param>
/// <param name="InSampleMae">Mean absolute in-sample one-step error.</param>
/// <param name="InSampleRmse">Root mean squared in-sample one-step error.</param>
/// <param name="Path">The forecast at each of the question's target periods after the reference series.</param>
public sealed record BenchmarkDto(
    string Method, string Name, bool Available, string? Reason, IReadOnlyDictionary<string, double> Parameters,
    int Residuals, double? Sigma, double? InSampleMae, double? InSampleRmse, IReadOnlyList<BenchmarkPointDto> Path);

/// <summary>The benchmarks of one question, from its indicator's reference series.</summary>
public sealed record QuestionBenchmarksDto(
    int QuestionId, string Question, string Indicator, string Unit, int Decimals, string Format,
    int ReferenceN, string? ReferenceFrom, string? ReferenceTo, bool Quarterly, IReadOnlyList<BenchmarkDto> Benchmarks);

/// <summary>A panel's benchmark forecasts.</summary>
/// <param name="PanelId">The panel.</param>
/// <param name="MeanWindow">k of the mean of the last k observations.</param>
/// <param name="Coverage">The nominal coverage of the intervals (0.8: P10 to P90).</param>
/// <param name="Method">How they were computed, in words.</param>
/// <param name="Questions">Per question, in question order.</param>
public sealed record PanelBenchmarksDto(int PanelId, int MeanWindow, double Coverage, string Method, IReadOnlyList<QuestionBenchmarksDto> Questions);

/// <summary>
/// Benchmark forecasts for a panel's questions: each question's target periods forecast from its
/// indicator's reference series (the current observations before the panel's start) by the core's methods.
/// </summary>
/// <remarks>
/// The series is the trailing run of consecutive periods of one kind: quarters when the last reference
/// observation is a quarter (the seasonal naive is added), else years; a gap ends the run, so the
/// methods always see equally spaced values. A yearly target of a quarterly series is forecast at its
/// fourth quarter. Targets at or before the series' end get no benchmark value.
/// </remarks>
public sealed class PanelBenchmarks(PanelRoundDbContext db)
{
    public const string MethodText =
        "Benchmarks from the indicator's reference series (observations before the panel's start): no change, random walk with drift, mean of the last k, "
        + "simple exponential smoothing, Holt's linear trend and damped trend (plus seasonal naive for quarterly series), after Hyndman & Athanasopoulos, "
        + "Forecasting: Principles and Practice, 3rd ed. (2021), chapters 5 and 8; smoothing parameters minimise the one-step squared errors; "
        + "80% prediction intervals (P10-P90) from the formulas of the same source.";

    public async Task<PanelBenchmarksDto?> BuildAsync(int panelId)
    {
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return null;
        }
        return Build(panel, await IndicatorCatalog.ReferenceSeriesAsync(db, panel.Questions.Select(q => q.IndicatorId).Distinct().ToList(), panel.StartsOn));
    }

    /// <summary>The benchmarks of a panel already read.</summary>
    public PanelBenchmarksDto Build(PanelSnapshot snapshot)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        return Build(snapshot.Panel, snapshot.References);
    }

    private static PanelBenchmarksDto Build(Panel panel, ILookup<int, SeriesPoint> references)
    {
        var questions = panel.Questions.OrderBy(q => q.Order).Select(q =>
        {
            var reference = references[q.IndicatorId].ToList();
            var targets = (string.IsNullOrWhiteSpace(q.TargetPeriods) ? panel.TargetPeriods : q.TargetPeriods).Split(',', StringSplitOptions.RemoveEmptyEntries);
            var (series, quarterly) = TrailingRun(reference);
            return new QuestionBenchmarksDto(q.Id, q.Label, q.Indicator!.Key, q.Indicator.UnitLabel, q.Indicator.Decimals, q.Format.ToString(),
                series.Count, series.Count > 0 ? series[0].Period : null, series.Count > 0 ? series[^1].Period : null, quarterly,
                ForQuestion(reference, targets, panel.Settings.BenchmarkWindow));
        }).ToList();
        return new PanelBenchmarksDto(panel.Id, panel.Settings.BenchmarkWindow, 0.8, MethodText, questions);
    }

    /// <summary>Fitted benchmarks by their whole input (series, targets, window): fitting is pure and costs tens of milliseconds per page.</summary>
    private static readonly InputKeyedCache<IReadOnlyList<BenchmarkDto>> Fitted = new(1024);

    /// <summary>The benchmarks of one question: pure, from its reference series and target periods; see the type's remarks.</summary>
    public static IReadOnlyList<BenchmarkDto> ForQuestion(IReadOnlyList<SeriesPoint> reference, IReadOnlyList<string> targets, int meanWindow)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(targets);
        var key = string.Create(CultureInfo.InvariantCulture,
            $"{meanWindow}|{string.Join(',', targets)}|{string.Join(';', reference.Select(r => string.Create(CultureInfo.InvariantCulture, $"{r.Period}={r.Value:R}")))}");
        return Fitted.GetOrAdd(key, () => Fit(reference, targets, meanWindow));
    }

    private static IReadOnlyList<BenchmarkDto> Fit(IReadOnlyList<SeriesPoint> reference, IReadOnlyList<string> targets, int meanWindow)
    {
        var (series, quarterly) = TrailingRun(reference);
        var options = new BenchmarkOptions { MeanWindow = Math.Clamp(meanWindow, 1, 40), SeasonalPeriod = quarterly ? 4 : 1 };
        var last = series.Count > 0 ? Period.Parse(series[^1].Period) : (Period?)null;
        var horizons = targets.Select(t => (Target: t, H: last is { } l && Period.TryParse(t, out var p) ? StepsAhead(l, p.Value) : null))
            .Where(x => x.H is > 0 and <= 400).ToList();
        var maxH = horizons.Count == 0 ? 1 : horizons.Max(x => x.H!.Value);
        var values = series.Select(s => s.Value).ToList();
        var results = Core.Forecasting.Benchmarks.FitAll(values, maxH, options);
        return results.Select(r =>
        {
            var name = BenchmarkMethods.Describe(r.Method, options.MeanWindow);
            if (r.Fit is not { } fit)
            {
                return new BenchmarkDto(BenchmarkMethods.Key(r.Method), name, false, r.Reason, new Dictionary<string, double>(), 0, null, null, null, []);
            }
            var path = horizons.Select(x =>
            {
                var step = fit.Steps[x.H!.Value - 1];
                return new BenchmarkPointDto(x.Target, x.H.Value, step.Point, step.P10, step.P90);
            }).ToList();
            return new BenchmarkDto(BenchmarkMethods.Key(r.Method), name, true, null, fit.Parameters, fit.Residuals,
                Finite(fit.Sigma), Finite(fit.InSampleMae), Finite(fit.InSampleRmse), path);
        }).ToList();
    }

    /// <summary>h from the last reference period to a target: years to a year, quarters to a quarter, quarters to the fourth quarter of a target year; null for a quarter target after a yearly series.</summary>
    public static int? StepsAhead(Period last, Period target) => (last.IsYear, target.IsYear) switch
    {
        (true, true) => target.Year - last.Year,
        (false, false) => ((target.Year - last.Year) * 4) + target.Quarter - last.Quarter,
        (false, true) => ((target.Year - last.Year) * 4) + 4 - last.Quarter,
        _ => null,
    };

    /// <summary>The trailing run of consecutive periods of the last observation's kind; true when quarterly.</summary>
    public static (IReadOnlyList<SeriesPoint> Series, bool Quarterly) TrailingRun(IReadOnlyList<SeriesPoint> reference)
    {
        var parsed = reference.Select(r => (Point: r, Period: Period.TryParse(r.Period, out var p) ? p : null))
            .Where(x => x.Period is not null && double.IsFinite(x.Point.Value)).ToList();
        if (parsed.Count == 0)
        {
            return ([], false);
        }
        var quarterly = !parsed[^1].Period!.Value.IsYear;
        var ofKind = parsed.Where(x => x.Period!.Value.IsYear != quarterly).OrderBy(x => x.Period!.Value).ToList();
        var start = ofKind.Count - 1;
        while (start > 0 && StepsAhead(ofKind[start - 1].Period!.Value, ofKind[start].Period!.Value) == 1)
        {
            start--;
        }
        return (ofKind.Skip(start).Select(x => x.Point).ToList(), quarterly);
    }

    private static double? Finite(double v) => double.IsFinite(v) ? v : null;
}
