using System.Globalization;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// How pages, charts and documents write a number for people: invariant culture, a stated number of decimals,
/// and a value that rounds to zero written as zero ("0.00"), never "-0.00" and never "+0.00". A number that is
/// missing or not finite is a dash.
/// </summary>
/// <remarks>
/// Implementation note: the sign is dropped from the formatted text, not from the number before formatting, so
/// that the rounding is the formatter's own (rounding the double first can differ from it in the last digit).
/// </remarks>
public static class NumberText
{
    /// <summary>What a missing or non-finite number is written as.</summary>
    public const string Missing = "–";

    /// <summary>Digits grouped by thousands with <paramref name="decimals"/> decimals (0 to 15), e.g. <c>-1,234.50</c>.</summary>
    public static string Fixed(double? value, int decimals) =>
        value is { } v && double.IsFinite(v) ? Format(v, "N" + Math.Clamp(decimals, 0, 15).ToString(CultureInfo.InvariantCulture)) : Missing;

    /// <summary>As <see cref="Fixed"/> with a plus sign before a positive value, e.g. <c>+0.12</c>; a value that rounds to zero has no sign.</summary>
    public static string Signed(double? value, int decimals)
    {
        var text = Fixed(value, decimals);
        return text != Missing && value > 0 && !IsZero(text) ? "+" + text : text;
    }

    /// <summary>A share as a percentage with <paramref name="decimals"/> decimals, e.g. 0.123 → <c>12.3%</c>.</summary>
    public static string Percent(double? share, int decimals = 1) =>
        share is { } s && double.IsFinite(s) ? Format(100 * s, decimals <= 0 ? "0" : "0." + new string('0', Math.Min(decimals, 15))) + "%" : Missing;

    /// <summary>A share as a signed percentage, e.g. −0.0314 → <c>-3.1%</c>, 0.2 → <c>+20.0%</c>; one that rounds to zero has no sign.</summary>
    public static string SignedPercent(double? share, int decimals = 1)
    {
        var text = Percent(share, decimals);
        return text != Missing && share > 0 && !IsZero(text.TrimEnd('%')) ? "+" + text : text;
    }

    /// <summary>The value in a .NET custom or standard format (invariant), with a negative zero written without its sign.</summary>
    public static string Format(double value, string format)
    {
        var text = value.ToString(format, CultureInfo.InvariantCulture);
        return text.Length > 1 && text[0] == '-' && IsZero(text[1..]) ? text[1..] : text;
    }

    /// <summary>True when the text is a written zero: only zeros and separators (and at least one zero).</summary>
    private static bool IsZero(string text) =>
        text.Contains('0', StringComparison.Ordinal) && text.AsSpan().TrimStart('-').IndexOfAnyExcept("0.,") < 0;
}
