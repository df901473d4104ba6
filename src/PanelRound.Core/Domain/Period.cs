using System.Diagnostics.CodeAnalysis;
using System.Globalization;

namespace PanelRound.Core.Domain;

/// <summary>
/// A target or observation period: a calendar year (<c>2027</c>) or a quarter (<c>2027Q3</c>).
/// </summary>
/// <remarks>
/// Periods order by time: a year sorts after its own quarters, so that <c>2027Q4 &lt; 2027 &lt; 2028Q1</c>
/// (a yearly value is read as the value at the end of the year). The text form is the
/// interface of every CSV column named <c>period</c> or <c>target_period</c>.
/// </remarks>
public readonly record struct Period : IComparable<Period>
{
    private Period(int year, int quarter)
    {
        Year = year;
        Quarter = quarter;
    }

    /// <summary>The calendar year.</summary>
    public int Year { get; }

    /// <summary>1 to 4 for a quarter, 0 for a whole year.</summary>
    public int Quarter { get; }

    /// <summary>True when the period is a whole year.</summary>
    public bool IsYear => Quarter == 0;

    /// <summary>A number that orders periods by time; see the type's remarks.</summary>
    public int SortKey => Year * 10 + (Quarter == 0 ? 5 : Quarter);

    /// <summary>The last day of the period: 31 December for a year, the quarter's last day otherwise.</summary>
    public DateOnly EndDate => IsYear ? new DateOnly(Year, 12, 31) : new DateOnly(Year, Quarter * 3, 1).AddMonths(1).AddDays(-1);

    /// <summary>A whole year.</summary>
    public static Period OfYear(int year) => new(CheckYear(year), 0);

    /// <summary>A quarter of a year.</summary>
    public static Period OfQuarter(int year, int quarter)
    {
        if (quarter is < 1 or > 4)
        {
            throw new ArgumentOutOfRangeException(nameof(quarter), quarter, "A quarter is 1 to 4.");
        }
        return new(CheckYear(year), quarter);
    }

    /// <summary>Parses <c>2027</c> or <c>2027Q3</c> (case-insensitive, surrounding spaces ignored).</summary>
    public static bool TryParse(string? text, [NotNullWhen(true)] out Period? period)
    {
        period = null;
        if (string.IsNullOrWhiteSpace(text))
        {
            return false;
        }
        var s = text.Trim();
        if (s.Length == 4 && int.TryParse(s, NumberStyles.None, CultureInfo.InvariantCulture, out var y) && y >= 1900 && y <= 2200)
        {
            period = new Period(y, 0);
            return true;
        }
        if (s.Length == 6 && (s[4] == 'Q' || s[4] == 'q')
            && int.TryParse(s.AsSpan(0, 4), NumberStyles.None, CultureInfo.InvariantCulture, out y) && y >= 1900 && y <= 2200
            && s[5] is >= '1' and <= '4')
        {
            period = new Period(y, s[5] - '0');
            return true;
        }
        return false;
    }

    /// <summary>Parses or throws <see cref="FormatException"/>.</summary>
    public static Period Parse(string text) =>
        TryParse(text, out var p) ? p.Value : throw new FormatException($"'{text}' is not a period: write a year such as 2027 or a quarter such as 2027Q3.");

    /// <summary>
    /// Parses a list of periods: comma- or space-separated items, each a period or an inclusive
    /// range of years such as <c>2027-2031</c>.
    /// </summary>
    public static bool TryParseList(string? text, out IReadOnlyList<Period> periods, out string? error)
    {
        var list = new List<Period>();
        periods = list;
        error = null;
        if (string.IsNullOrWhiteSpace(text))
        {
            error = "Give at least one target period, e.g. 2027-2031.";
            return false;
        }
        foreach (var raw in text.Split([',', ';', ' '], StringSplitOptions.RemoveEmptyEntries))
        {
            var dash = raw.IndexOf('-', StringComparison.Ordinal);
            if (dash > 0)
            {
                if (!TryParse(raw[..dash], out var from) || !TryParse(raw[(dash + 1)..], out var to)
                    || !from.Value.IsYear || !to.Value.IsYear || to.Value.Year < from.Value.Year || to.Value.Year - from.Value.Year > 50)
                {
                    error = $"'{raw}' is not a range of years such as 2027-2031.";
                    return false;
                }
                for (var y = from.Value.Year; y <= to.Value.Year; y++)
                {
                    list.Add(OfYear(y));
                }
            }
            else if (TryParse(raw, out var p))
            {
                list.Add(p.Value);
            }
            else
            {
                error = $"'{raw}' is not a period: write a year such as 2027 or a quarter such as 2027Q3.";
                return false;
            }
        }
        if (list.Distinct().Count() != list.Count)
        {
            error = "A target period is listed twice.";
            return false;
        }
        list.Sort();
        return true;
    }

    /// <inheritdoc />
    public int CompareTo(Period other) => SortKey.CompareTo(other.SortKey);

    /// <summary>Compares by time.</summary>
    public static bool operator <(Period left, Period right) => left.CompareTo(right) < 0;

    /// <summary>Compares by time.</summary>
    public static bool operator >(Period left, Period right) => left.CompareTo(right) > 0;

    /// <summary>Compares by time.</summary>
    public static bool operator <=(Period left, Period right) => left.CompareTo(right) <= 0;

    /// <summary>Compares by time.</summary>
    public static bool operator >=(Period left, Period right) => left.CompareTo(right) >= 0;

    /// <summary>The text form: <c>2027</c> or <c>2027Q3</c>.</summary>
    public override string ToString() =>
        IsYear ? Year.ToString(CultureInfo.InvariantCulture) : string.Create(CultureInfo.InvariantCulture, $"{Year}Q{Quarter}");

    private static int CheckYear(int year) =>
        year is < 1900 or > 2200 ? throw new ArgumentOutOfRangeException(nameof(year), year, "A year is 1900 to 2200.") : year;
}
