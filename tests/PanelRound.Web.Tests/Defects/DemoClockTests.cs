using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text;
using Microsoft.AspNetCore.Hosting;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Demo;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// The demo agrees with the clock of the day it is loaded on: nothing is known, submitted,
/// closed or recorded after that day, no outcome is of a period that has not ended, the open
/// round is open, and the app's own rules accept every demo value as of that day.
/// </summary>
public abstract class DemoClockTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly string DemoFolder = Path.Combine(AppContext.BaseDirectory, "demo-data");

    private sealed record ImportResult(int Added, int Corrected, int Unchanged);

    [SkippableTheory]
    [InlineData("2026-12-02T09:30:00Z")] // the day the scenario was written for
    [InlineData("2026-06-15T12:00:00Z")] // the middle of the same year
    [InlineData("2027-06-15T12:00:00Z")] // the middle of the next year
    [InlineData("2026-01-10T08:00:00Z")] // early in a year, before last year's figures are out
    public async Task Demo_LoadedOnADay_AgreesWithTheClockOfThatDay(string instant)
    {
        var clockNow = DateTimeOffset.Parse(instant, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal);
        var now = clockNow.UtcDateTime;
        var today = DateOnly.FromDateTime(now);
        // The demo loads as it does at start-up (Demo:Enabled), on an empty database, with the app's clock stopped at the instant.
        var app = await StartAsync();
        app.Clock!.StopAt(clockNow);
        using (var loadScope = app.Services.CreateScope())
        {
            var loader = ActivatorUtilities.CreateInstance<DemoLoader>(loadScope.ServiceProvider);
            var contentRoot = app.Services.GetRequiredService<IWebHostEnvironment>().ContentRootPath;
            Assert.True(await loader.LoadIfEmptyAsync(contentRoot, new DemoOptions { Enabled = true, Folder = DemoFolder }));
        }
        using var scope = app.Services.CreateScope();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();

        // Observations (the outcomes of past panels among them): of ended periods, known by today.
        var observations = await db.Observations.AsNoTracking().Include(o => o.Indicator).ToListAsync();
        Assert.NotEmpty(observations);
        foreach (var o in observations)
        {
            var period = Period.Parse(o.Period);
            Assert.True(period.EndDate < today, $"{o.Indicator!.Key} {o.Period} has a value on {today:yyyy-MM-dd}, before the period ends.");
            Assert.Null(ObservationDates.ObservedOnError(period, o.ObservedOn, today));
            Assert.True(o.RecordedAt <= now, $"{o.Indicator!.Key} {o.Period} recorded at {o.RecordedAt:O}, after {now:O}.");
        }

        // Panels, rounds, answers and consensus: nothing after now; the running panel asks about periods still to come.
        var panels = await db.Panels.AsNoTracking().Include(p => p.Rounds).Include(p => p.Questions).ThenInclude(q => q.Indicator)
            .AsSplitQuery().ToListAsync();
        Assert.Equal(4, panels.Count);
        var running = Assert.Single(panels, p => p.State != PanelState.Concluded);
        foreach (var p in panels)
        {
            Assert.True(p.StartsOn <= today, $"{p.Title} starts on {p.StartsOn:yyyy-MM-dd}, after today.");
            Assert.True(p.CreatedAt <= now, $"{p.Title} was created at {p.CreatedAt:O}, after now.");
            Assert.True(p.ConcludedAt is null || p.ConcludedAt <= now, $"{p.Title} concluded at {p.ConcludedAt:O}, after now.");
            var periods = p.TargetPeriods.Split(',').Select(Period.Parse).ToList();
            // The demo's titles name the target years, so a shifted scenario must say so.
            Assert.Contains($"{periods[0].Year}-{periods[^1].Year}", p.Title, StringComparison.Ordinal);
            foreach (var r in p.Rounds)
            {
                Assert.True(r.OpensAt <= now, $"{p.Title} round {r.Number} opens at {r.OpensAt:O}, after now.");
                if (r.State == RoundState.Closed)
                {
                    Assert.True(r.ClosesAt <= now && r.ClosedAt <= now, $"{p.Title} round {r.Number} closed at {r.ClosedAt:O}, after now.");
                }
                else
                {
                    Assert.True(r.ClosesAt > now, $"{p.Title} round {r.Number} is open but its deadline {r.ClosesAt:O} has passed.");
                }
            }
            if (p == running)
            {
                Assert.Single(p.Rounds, r => r.State == RoundState.Open);
                Assert.All(periods, t => Assert.True(t.EndDate > today, $"The running panel asks about {t}, which has ended."));
                foreach (var q in p.Questions)
                {
                    var reference = observations.Count(o => o.IndicatorId == q.IndicatorId && Period.Parse(o.Period).EndDate < p.StartsOn);
                    Assert.True(reference >= 10, $"{q.Indicator!.Key}: {reference} reference observations before the running panel.");
                }
            }
            else
            {
                // Shifted, not filtered: every past target period still has its outcome.
                foreach (var q in p.Questions)
                {
                    Assert.All(periods, t => Assert.Contains(observations, o => o.IndicatorId == q.IndicatorId && o.Period == t.ToString()));
                }
            }
        }
        Assert.True(await db.Estimates.AllAsync(e => e.CreatedAt <= now), "An answer was submitted after now.");
        Assert.True(await db.Consensus.AllAsync(c => c.PublishedAt <= now), "A consensus was published after now.");
        Assert.True(await db.Memberships.AllAsync(m => m.CreatedAt <= now && m.TokenIssuedAt <= now), "A link was issued after now.");
        Assert.True(await db.Users.AllAsync(u => u.CreatedAt <= now), "A staff account was created after now.");
        Assert.True(await db.AuditEvents.AllAsync(a => a.At <= now), "The audit trail has an event after now.");

        // The app's outcome rules, as of today, accept every demo observation as it stands (nothing added, nothing corrected).
        var csv = new StringBuilder("indicator,period,value,source,observed_on\n");
        foreach (var o in observations)
        {
            csv.Append(CultureInfo.InvariantCulture,
                $"{o.Indicator!.Key},{o.Period},{o.Value.ToString("R", CultureInfo.InvariantCulture)},\"{o.Source}\",{o.ObservedOn:yyyy-MM-dd}\n");
        }
        var reviewer = app.Client(await ApiKeys.CreateAsync(db, "demo-clock", Roles.Reviewer, "test"));
        using var form = new MultipartFormDataContent();
        var file = new ByteArrayContent(Encoding.UTF8.GetBytes(csv.ToString()));
        file.Headers.ContentType = new MediaTypeHeaderValue("text/csv");
        form.Add(file, "file", "outcomes.csv");
        var response = await reviewer.PostAsync("/api/outcomes/csv", form);
        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, $"The outcome import refused the demo's observations as of {today:yyyy-MM-dd}: {text}");
        var result = (await response.Content.ReadFromJsonAsync<ImportResult>(Api.Json))!;
        Assert.Equal(new ImportResult(0, 0, observations.Count), result);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteDemoClockTests(SqliteFixture fixture) : DemoClockTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresDemoClockTests(PostgresFixture fixture) : DemoClockTests(fixture);
