using System.Globalization;

namespace PanelRound.Web.Features.Panels;

/// <summary>
/// A panel's time zone (an IANA name such as <c>Europe/Lisbon</c>) and how deadlines are written for
/// people: always in UTC, and also in the panel's zone when that is not UTC.
/// </summary>
public static class PanelTimes
{
    private const string Format = "d MMMM yyyy, HH:mm";

    /// <summary>The zone of an IANA name the server knows, or null (a Windows name, an unknown or empty name).</summary>
    public static TimeZoneInfo? Find(string? name)
    {
        if (string.IsNullOrWhiteSpace(name) || name.Length > Core.Domain.FieldLengths.TimeZone)
        {
            return null;
        }
        if (name == "UTC")
        {
            return TimeZoneInfo.Utc;
        }
        return TimeZoneInfo.TryFindSystemTimeZoneById(name, out var zone) && zone.HasIanaId ? zone : null;
    }

    /// <summary>An instant in UTC, e.g. <c>15 July 2027, 16:00 UTC</c>.</summary>
    public static string Utc(DateTime utc) => DateTime.SpecifyKind(utc, DateTimeKind.Utc).ToString(Format, CultureInfo.InvariantCulture) + " UTC";

    /// <summary>An instant in the panel's zone, e.g. <c>15 July 2027, 17:00 Europe/Lisbon time</c>; null when the zone is UTC or unknown.</summary>
    public static string? Local(DateTime utc, string? zoneName)
    {
        var zone = Find(zoneName);
        if (zone is null || zone.Id is "UTC" or "Etc/UTC")
        {
            return null;
        }
        var local = TimeZoneInfo.ConvertTimeFromUtc(DateTime.SpecifyKind(utc, DateTimeKind.Utc), zone);
        return $"{local.ToString(Format, CultureInfo.InvariantCulture)} {zone.Id} time";
    }

    /// <summary>
    /// An instant in UTC and in the panel's zone, e.g. <c>15 July 2027, 16:00 UTC (15 July 2027, 17:00 Europe/Lisbon time)</c>;
    /// UTC alone when the zone is UTC or unknown.
    /// </summary>
    public static string UtcAndLocal(DateTime utc, string? zoneName) =>
        Local(utc, zoneName) is { } local ? $"{Utc(utc)} ({local})" : Utc(utc);
}
