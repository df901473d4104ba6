using System.Globalization;
using Microsoft.AspNetCore.Mvc.ModelBinding;
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

    /// <summary>A number for display with the indicator's decimals, in the invariant culture.</summary>
    public static string Num(double? v, int decimals) =>
        v is { } x ? x.ToString("N" + decimals.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture) : "–";

    public static string Pct(double? v) => v is { } x ? (x * 100).ToString("0.0", CultureInfo.InvariantCulture) + "%" : "–";

    /// <summary>A value for an input field (invariant, full precision).</summary>
    public static string Raw(double? v) => v?.ToString("R", CultureInfo.InvariantCulture) ?? "";

    public static string Utc(DateTime? t) => t is { } x ? x.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) + " UTC" : "–";
}
