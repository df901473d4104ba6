using System.Globalization;

namespace PanelRound.Core.Domain;

/// <summary>The decimal separator a person types numbers with.</summary>
public enum DecimalSeparator
{
    /// <summary>A point: 1234.5 (also 1 234.5 with spaces between groups).</summary>
    Point,

    /// <summary>A comma: 1234,5 (also 1 234,5 with spaces between groups).</summary>
    Comma,
}

/// <summary>A number read from text, or why it could not be read.</summary>
/// <param name="Value">The number, when <see cref="Error"/> is null.</param>
/// <param name="Error">A message for the person who typed it, or null.</param>
public readonly record struct NumberReading(double Value, string? Error)
{
    /// <summary>True when the text was a number within the limits.</summary>
    public bool IsValid => Error is null;
}

/// <summary>
/// The one rule for numbers that enter the product (answers, bounds, observations, outcomes,
/// imports): finite, at most <see cref="MaxMagnitude"/> in magnitude, and read from text by an
/// explicit rule so that a number is never silently changed into another.
/// </summary>
/// <remarks>
/// <para>Why a magnitude limit: every statistic the product computes (differences of quartiles,
/// fences, sums of up to 10⁶ answers, squared errors) stays finite and exact enough when inputs
/// satisfy |x| ≤ 10¹²; a single finite but huge answer such as 1.7·10³⁰⁸ would otherwise
/// overflow a sum or a difference to infinity. 10¹² is far beyond any price, rent, rate or
/// transaction volume in the units the product uses.</para>
/// <para>Reading rules. <see cref="TryParseInvariant"/> is the rule for files and machine input:
/// an optional sign, digits with an optional point and decimals, an optional exponent; no
/// thousands separators, no comma. <see cref="TryParseEntry"/> is the rule for numbers people type:
/// the person's <see cref="DecimalSeparator"/> (given, never guessed), spaces (including
/// no-break and thin spaces) or apostrophes allowed between digit groups, and the other
/// separator character refused with a message, so that "1,5" is 1.5 for the decimal comma and an
/// error (never 15) for the decimal point. Both refuse an underflow (a non-zero mantissa that
/// reads as 0, such as 1e-400) and values beyond <see cref="MaxMagnitude"/>.</para>
/// </remarks>
public static class Numbers
{
    /// <summary>The largest magnitude accepted for any number: |x| ≤ 10¹².</summary>
    public const double MaxMagnitude = 1e12;

    /// <summary>The message for a value beyond <see cref="MaxMagnitude"/>.</summary>
    public const string OutOfBoundsMessage = "is larger in magnitude than 1e12 (10^12); check the unit and the decimal separator.";

    /// <summary>True when the value is finite and |value| ≤ <see cref="MaxMagnitude"/>.</summary>
    public static bool InBounds(double value) => double.IsFinite(value) && Math.Abs(value) <= MaxMagnitude;

    /// <summary>Why a value cannot be accepted (not finite, or too large), or null when it can.</summary>
    public static string? LimitError(double value) =>
        !double.IsFinite(value) ? "must be a finite number."
        : Math.Abs(value) > MaxMagnitude ? OutOfBoundsMessage
        : null;

    /// <summary>Reads a number written by a machine: invariant culture, a point for decimals, no grouping.</summary>
    public static NumberReading TryParseInvariant(string? text)
    {
        var t = text?.Trim() ?? "";
        if (t.Length == 0)
        {
            return new NumberReading(0, "is empty.");
        }

        if (!IsPlainNumber(t, '.'))
        {
            return new NumberReading(0, $"'{Clip(t)}' is not a number (write digits with a point for decimals, e.g. 1234.5).");
        }

        return Finish(t);
    }

    /// <summary>Reads a number a person typed with their decimal separator (see the remarks on <see cref="Numbers"/>).</summary>
    public static NumberReading TryParseEntry(string? text, DecimalSeparator separator)
    {
        var t = text?.Trim() ?? "";
        if (t.Length == 0)
        {
            return new NumberReading(0, "is empty.");
        }

        var (mine, other) = separator == DecimalSeparator.Comma ? (',', '.') : ('.', ',');
        var compact = RemoveGroupSpaces(t);
        if (compact is null)
        {
            return new NumberReading(0, $"'{Clip(t)}': spaces or apostrophes may only separate groups of three digits.");
        }

        if (compact.Contains(other, StringComparison.Ordinal))
        {
            var name = separator == DecimalSeparator.Comma ? "the decimal comma" : "the decimal point";
            var example = separator == DecimalSeparator.Comma ? "1234,5 or 1 234,5" : "1234.5 or 1 234.5";
            return new NumberReading(0, $"'{Clip(t)}' contains '{other}', but your numbers use {name}: write {example} (no '{other}').");
        }

        // The minus sign U+2212 is what some keyboards and copied text give.
        compact = compact.Replace('\u2212', '-');
        if (!IsPlainNumber(compact, mine))
        {
            return new NumberReading(0, $"'{Clip(t)}' is not a number.");
        }

        return Finish(compact.Replace(mine, '.'));
    }

    private static NumberReading Finish(string invariantText)
    {
        var value = double.Parse(invariantText, NumberStyles.AllowLeadingSign | NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent, CultureInfo.InvariantCulture);
        if (!double.IsFinite(value) || Math.Abs(value) > MaxMagnitude)
        {
            return new NumberReading(0, $"'{Clip(invariantText)}' {OutOfBoundsMessage}");
        }

        if (value == 0 && HasNonZeroMantissa(invariantText))
        {
            return new NumberReading(0, $"'{Clip(invariantText)}' is too small to store (it would become 0).");
        }

        if (value != 0 && !double.IsNormal(value))
        {
            return new NumberReading(0, $"'{Clip(invariantText)}' is too small to store exactly.");
        }

        return new NumberReading(value, null);
    }

    /// <summary>[+-]digits[sep digits][(e|E)[+-]digits], or [+-]sep digits.</summary>
    private static bool IsPlainNumber(string t, char separator)
    {
        var i = 0;
        if (i < t.Length && (t[i] == '+' || t[i] == '-'))
        {
            i++;
        }

        var intDigits = 0;
        while (i < t.Length && char.IsAsciiDigit(t[i]))
        {
            i++;
            intDigits++;
        }

        var fracDigits = 0;
        if (i < t.Length && t[i] == separator)
        {
            i++;
            while (i < t.Length && char.IsAsciiDigit(t[i]))
            {
                i++;
                fracDigits++;
            }
        }

        if (intDigits + fracDigits == 0)
        {
            return false;
        }

        if (i < t.Length && (t[i] == 'e' || t[i] == 'E'))
        {
            i++;
            if (i < t.Length && (t[i] == '+' || t[i] == '-'))
            {
                i++;
            }

            var expDigits = 0;
            while (i < t.Length && char.IsAsciiDigit(t[i]))
            {
                i++;
                expDigits++;
            }

            if (expDigits == 0)
            {
                return false;
            }
        }

        return i == t.Length;
    }

    /// <summary>
    /// Removes spaces and apostrophes that separate groups of three digits in the integer part;
    /// null when one stands anywhere else.
    /// </summary>
    private static string? RemoveGroupSpaces(string t)
    {
        static bool IsGroupMark(char c) => c is ' ' or '\u00A0' or '\u202F' or '\u2009' or '\'' or '\u2019';
        if (!t.Any(IsGroupMark))
        {
            return t;
        }

        var parts = new List<string>();
        var start = 0;
        for (var i = 0; i < t.Length; i++)
        {
            if (IsGroupMark(t[i]))
            {
                parts.Add(t[start..i]);
                start = i + 1;
            }
        }

        parts.Add(t[start..]);
        var first = parts[0].TrimStart('+', '-', '\u2212');
        if (first.Length is < 1 or > 3 || !first.All(char.IsAsciiDigit))
        {
            return null;
        }

        for (var p = 1; p < parts.Count; p++)
        {
            var digits = p == parts.Count - 1 ? LeadingDigits(parts[p]) : parts[p].Length;
            if (digits != 3 || (p < parts.Count - 1 && !parts[p].All(char.IsAsciiDigit)))
            {
                return null;
            }
        }

        return string.Concat(parts);
    }

    private static int LeadingDigits(string s)
    {
        var n = 0;
        while (n < s.Length && char.IsAsciiDigit(s[n]))
        {
            n++;
        }

        return n;
    }

    private static bool HasNonZeroMantissa(string t)
    {
        foreach (var c in t)
        {
            if (c is 'e' or 'E')
            {
                break;
            }

            if (c is >= '1' and <= '9')
            {
                return true;
            }
        }

        return false;
    }

    private static string Clip(string text) => text.Length > 24 ? text[..24] + "…" : text;
}
