using System.Globalization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.ModelBinding;
using Microsoft.AspNetCore.Mvc.RazorPages;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages;

/// <summary>Puts an application result's field errors beside the page's fields.</summary>
public static class PageSupport
{
    /// <summary>Copies errors keyed like <c>settings.trimFraction</c> to <c>Input.Settings.TrimFraction</c>; a conflict or not-found goes to the summary.</summary>
    public static void AddResult<T>(this ModelStateDictionary state, Result<T> result, string prefix = "Input")
    {
        foreach (var (key, messages) in result.Errors)
        {
            var field = string.Join('.', key.Split('.').Select(s => s.Length == 0 ? s : char.ToUpperInvariant(s[0]) + s[1..]));
            foreach (var m in messages)
            {
                state.AddModelError(prefix.Length == 0 ? field : $"{prefix}.{field}", m);
            }
        }
        if (result.Kind is ResultKind.Conflict or ResultKind.NotFound)
        {
            state.AddModelError(string.Empty, result.Message ?? "The operation was refused.");
        }
    }

    /// <summary>
    /// What a page answers to an operation's result: <paramref name="onOk"/> when it succeeded; else the
    /// page again, its fields' errors beside them (<see cref="AddResult"/>) after <paramref name="reload"/>
    /// has loaded what the page shows.
    /// </summary>
    public static async Task<IActionResult> AnswerAsync<T>(this PageModel page, Result<T> result, Func<T, IActionResult> onOk, Func<Task>? reload = null)
    {
        if (result.IsOk)
        {
            return onOk(result.Value!);
        }
        page.ModelState.AddResult(result);
        if (reload is not null)
        {
            await reload();
        }
        return page.Page();
    }

    /// <summary>The page with the view it shows (<paramref name="show"/> keeps it), or 404 when there is none.</summary>
    public static IActionResult PageOrNotFound<T>(this PageModel page, T? view, Action<T> show)
        where T : class
    {
        if (view is null)
        {
            return page.NotFound();
        }
        show(view);
        return page.Page();
    }

    /// <summary>A number for display with the indicator's decimals, in the invariant culture.</summary>
    public static string Num(double? v, int decimals) => NumberText.Fixed(v, decimals);

    /// <summary>A difference with its sign (<c>+1.50</c>, <c>-0.20</c>); one that rounds to zero is <c>0.00</c>, never <c>-0.00</c>.</summary>
    public static string Signed(double? v, int decimals) => NumberText.Signed(v, decimals);

    public static string Pct(double? v) => NumberText.Percent(v, 1);

    /// <summary>A question's response format in words, e.g. for a heading: "single value" or "range: P10, P50, P90".</summary>
    public static string FormatWords(ResponseFormat format) => format == ResponseFormat.Range ? "range: P10, P50, P90" : "single value";

    /// <summary>
    /// A consensus weighting as the API and the comparisons name it (<c>Equal</c>, <c>TrackRecord</c>, <c>Calibration</c>) in words,
    /// as in "this panel publishes with track-record weights".
    /// </summary>
    public static string WeightingWords(string weighting) => weighting switch
    {
        nameof(ConsensusWeighting.TrackRecord) => "track-record weights",
        nameof(ConsensusWeighting.Calibration) => "calibration-question weights",
        _ => "equal weights",
    };

    /// <summary>A value for an input field (invariant, full precision).</summary>
    public static string Raw(double? v) => v?.ToString("R", CultureInfo.InvariantCulture) ?? "";

    public static string Utc(DateTime? t) => t is { } x ? x.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) + " UTC" : "–";
}
