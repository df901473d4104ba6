using PanelRound.Core.Domain;

namespace PanelRound.Core.Tests;

/// <summary>When a period's value can have become known (no published source: the rule is the product's own, documented on <see cref="ObservationDates"/>).</summary>
public class ObservationDatesTests
{
    private static readonly DateOnly Today = new(2027, 6, 15);

    [Theory]
    [InlineData("2026", "2026-12-31")]   // the period's last day is the earliest
    [InlineData("2026", "2027-06-15")]   // today is the latest
    [InlineData("2027Q1", "2027-03-31")]
    public void ObservedOnError_DayBetweenThePeriodsEndAndToday_None(string period, string day) =>
        Assert.Null(ObservationDates.ObservedOnError(Period.Parse(period), DateOnly.Parse(day), Today));

    [Theory]
    [InlineData("2026", "2026-12-30", "before the period ends (2026-12-31)")]
    [InlineData("2027Q1", "2027-03-30", "before the period ends (2027-03-31)")]
    [InlineData("2026", "2027-06-16", "is after today (2027-06-15)")]
    public void ObservedOnError_DayOutside_NamesTheLimit(string period, string day, string expected) =>
        Assert.Contains(expected, ObservationDates.ObservedOnError(Period.Parse(period), DateOnly.Parse(day), Today), StringComparison.Ordinal);

    [Fact]
    public void ObservedOnError_NoDay_None() => Assert.Null(ObservationDates.ObservedOnError(Period.Parse("2030"), null, Today));

    [Fact]
    public void ObservedOnError_NoPeriod_OnlyTodayIsChecked()
    {
        Assert.Null(ObservationDates.ObservedOnError(null, new DateOnly(2000, 1, 1), Today));
        Assert.NotNull(ObservationDates.ObservedOnError(null, Today.AddDays(1), Today));
    }

    [Theory]
    [InlineData("2026", 90, "2027-03-31")]       // end 2026-12-31 plus 90 days
    [InlineData("2026", 0, "2026-12-31")]
    [InlineData("2027Q1", 90, "2027-06-15")]     // end plus 90 days is after today: today
    [InlineData("2027Q2", 0, null)]              // the period has not ended
    [InlineData("2027", 90, null)]
    public void AssumedObservedOn_PeriodEndPlusLag_AtTheLatestToday(string period, int lag, string? expected) =>
        Assert.Equal(expected is null ? null : DateOnly.Parse(expected), ObservationDates.AssumedObservedOn(Period.Parse(period), lag, Today));
}
