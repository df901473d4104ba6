namespace PanelRound.Core.Domain;

/// <summary>When a period's value can have become known: at the earliest on the period's last day, at the latest today.</summary>
public static class ObservationDates
{
    /// <summary>
    /// Why a day cannot be the day a period's value became known, or null when it can (or is not
    /// given): a value is known at the earliest on the period's last day, and at the latest today.
    /// </summary>
    /// <param name="period">The period, when it could be read; without one only "not after today" is checked.</param>
    /// <param name="observedOn">The day given, if any.</param>
    /// <param name="today">Today.</param>
    public static string? ObservedOnError(Period? period, DateOnly? observedOn, DateOnly today)
    {
        if (observedOn is not { } on)
        {
            return null;
        }
        if (period is { } p && on < p.EndDate)
        {
            return $"The value of {p} cannot be known on {on:yyyy-MM-dd}, before the period ends ({p.EndDate:yyyy-MM-dd}).";
        }
        return on > today ? $"The day it became known ({on:yyyy-MM-dd}) is after today ({today:yyyy-MM-dd})." : null;
    }

    /// <summary>
    /// The day a value without a known publication day counts as known: the period's end plus a
    /// usual publication lag, at the latest today; null while the period has not ended.
    /// </summary>
    /// <param name="period">The period.</param>
    /// <param name="lagDays">The usual lag between a period's end and the publication of its value, ≥ 0.</param>
    /// <param name="today">Today.</param>
    public static DateOnly? AssumedObservedOn(Period period, int lagDays, DateOnly today)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(lagDays);
        var end = period.EndDate;
        var lagged = end.AddDays(lagDays);
        return lagged <= today ? lagged : end < today ? today : null;
    }
}
