using System.Data.Common;
using System.Net;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Foundation;

/// <summary>
/// The shared test host: what one test leaves behind (rows, identities, a moved clock, mail)
/// is gone when the next test takes the host, so tests stay independent of their order.
/// </summary>
public abstract class SharedHostTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private readonly IDatabaseFixture _fixture = fixture;

    [SkippableFact]
    public async Task SharedHost_TakenAgain_EveryTableEmptyIdentitiesFromOneClockRealOutboxEmpty()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var indicatorId = (int)(await staff.PostOk("/api/indicators", new { key = "price-north", name = "Apartment price, north", unitLabel = "CU/m²", decimals = 0 }))["id"]!;
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Left behind", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!;
        await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId, label = "Price", format = "Point" });
        var expertId = (int)(await staff.PostOk("/api/experts", new { name = "Ada Marrow", email = "ada.marrow@calderport.example" }))["id"]!;
        await staff.PostOk($"/api/panels/{panelId}/members", new { expertId, sendInvitation = true });
        Assert.NotEmpty(Directory.GetFiles(app.OutboxFolder, "*.eml"));
        app.Clock!.Advance(TimeSpan.FromDays(400));
        Assert.True(await CountRowsAsync(app) > 5);

        var again = await _fixture.SharedAppAsync();

        Assert.Same(app, again);
        Assert.Equal(0, await CountRowsAsync(again));
        Assert.Empty(Directory.GetFiles(again.OutboxFolder));
        Assert.InRange(again.Clock!.GetUtcNow(), DateTimeOffset.UtcNow.AddMinutes(-5), DateTimeOffset.UtcNow.AddMinutes(5));
        // Identities start at 1 again, as in a new database; the API keeps working (data-protection keys are kept).
        var staffAgain = await again.StaffClientAsync();
        Assert.Equal(1, (int)(await staffAgain.PostOk("/api/panels", new { title = "First", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!);
        Assert.Equal(HttpStatusCode.OK, (await staffAgain.GetAsync("/api/panels/1")).StatusCode);
    }

    /// <summary>Rows in every table of the model except the two a reset keeps.</summary>
    private static Task<long> CountRowsAsync(TestApp app) => app.WithDbAsync(async db =>
    {
        var tables = db.Model.GetEntityTypes().Select(t => t.GetTableName()).OfType<string>().Distinct()
            .Where(t => !DatabaseFixture.KeptTables.Contains(t)).ToList();
        Assert.Contains("Panels", tables);
        DbConnection conn = db.Database.GetDbConnection();
        await db.Database.OpenConnectionAsync();
        long total = 0;
        foreach (var table in tables)
        {
            await using var cmd = conn.CreateCommand();
            cmd.CommandText = $"SELECT count(*) FROM \"{table}\"";
            total += Convert.ToInt64(await cmd.ExecuteScalarAsync(), System.Globalization.CultureInfo.InvariantCulture);
        }
        return total;
    });
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteSharedHostTests(SqliteFixture fixture) : SharedHostTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresSharedHostTests(PostgresFixture fixture) : SharedHostTests(fixture);
