using Microsoft.Extensions.Time.Testing;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>
/// The shared host's clock: a <see cref="FakeTimeProvider"/> that tests move with
/// <see cref="Advance"/> (a deadline passing, an outcome arriving) instead of editing rows.
/// Each test starts it again at the real time; time also moves one millisecond per reading, so
/// two records written one after the other never share a timestamp.
/// </summary>
/// <remarks>
/// Implementation note: a <see cref="FakeTimeProvider"/> cannot be set back, and the next test
/// must start at the real time again, so the host holds this wrapper and each reset puts a new
/// fake behind it.
/// </remarks>
public sealed class TestClock : TimeProvider
{
    private FakeTimeProvider _fake = Fresh();

    /// <summary>Moves the app's time forward.</summary>
    public void Advance(TimeSpan by) => _fake.Advance(by);

    /// <summary>Starts again at the real time (between tests).</summary>
    public void Restart() => _fake = Fresh();

    /// <summary>Stops the clock at an instant, past or future, until the next test (a day to load the demo on).</summary>
    public void StopAt(DateTimeOffset instant) => _fake = new FakeTimeProvider(instant);

    public override DateTimeOffset GetUtcNow() => _fake.GetUtcNow();

    public override TimeZoneInfo LocalTimeZone => _fake.LocalTimeZone;

    public override long TimestampFrequency => _fake.TimestampFrequency;

    public override long GetTimestamp() => _fake.GetTimestamp();

    public override ITimer CreateTimer(TimerCallback callback, object? state, TimeSpan dueTime, TimeSpan period) =>
        _fake.CreateTimer(callback, state, dueTime, period);

    private static FakeTimeProvider Fresh() =>
        new(DateTimeOffset.UtcNow) { AutoAdvanceAmount = TimeSpan.FromMilliseconds(1) };
}
