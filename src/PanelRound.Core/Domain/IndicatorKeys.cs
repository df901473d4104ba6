using System.Text.RegularExpressions;

namespace PanelRound.Core.Domain;

/// <summary>
/// The shape of an indicator's key, used in CSV files and the API: lower-case letters, digits and
/// dashes, not starting with a dash, e.g. <c>apt-price-old-harbour</c>.
/// </summary>
public static partial class IndicatorKeys
{
    /// <summary>True when the text has a key's shape (the length is checked against <see cref="FieldLengths.IndicatorKey"/> by the caller, which names the field).</summary>
    public static bool IsWellFormed(string key)
    {
        ArgumentNullException.ThrowIfNull(key);
        return Pattern().IsMatch(key);
    }

    [GeneratedRegex("^[a-z0-9][a-z0-9-]*$")]
    private static partial Regex Pattern();
}
