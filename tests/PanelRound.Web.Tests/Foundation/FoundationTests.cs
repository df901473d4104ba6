using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Foundation;

public abstract partial class FoundationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task Ready_FreshDatabase_MigrationsAppliedAndHealthy()
    {
        var app = await StartAsync();
        var client = app.Client();
        var live = await client.GetAsync("/health/live");
        var ready = await client.GetAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, live.StatusCode);
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        Assert.Contains("All migrations applied", await ready.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        var pending = await app.WithDbAsync(async db => (await db.Database.GetPendingMigrationsAsync()).Count());
        Assert.Equal(0, pending);
    }

    [SkippableFact]
    public async Task Model_ComparedWithMigrations_HasNoPendingChanges()
    {
        var app = await StartAsync();
        Assert.False(await app.WithDbAsync(db => Task.FromResult(db.Database.HasPendingModelChanges())),
            $"The model has changes without a migration for {Provider}: add one to both migration projects.");
    }

    [SkippableFact]
    public async Task Observation_WrittenThenReadInNewScope_RoundTripsWithUtcTimes()
    {
        var app = await StartAsync();
        var recorded = new DateTime(2026, 3, 14, 9, 26, 53, DateTimeKind.Utc);
        await app.WithDbAsync(async db =>
        {
            var indicator = new Indicator { Key = "rt-test", Name = "Round trip €/m²", UnitLabel = "EUR/m²", Decimals = 0, CreatedAt = recorded };
            indicator.Observations.Add(new Observation { Period = "2025Q3", PeriodSortKey = 20253, Value = 4321.5, Source = "test", RecordedAt = recorded, ObservedOn = new DateOnly(2025, 10, 31) });
            db.Indicators.Add(indicator);
            await db.SaveChangesAsync();
        });
        var read = await app.WithDbAsync(db => db.Indicators.Include(i => i.Observations).SingleAsync(i => i.Key == "rt-test"));
        Assert.Equal("Round trip €/m²", read.Name);
        var o = Assert.Single(read.Observations);
        Assert.Equal(4321.5, o.Value);
        Assert.Equal("2025Q3", o.Period);
        Assert.Equal(new DateOnly(2025, 10, 31), o.ObservedOn);
        Assert.Equal(recorded, o.RecordedAt);
        Assert.Equal(DateTimeKind.Utc, o.RecordedAt.Kind);
    }

    [SkippableFact]
    public async Task StaffPage_Anonymous_RedirectsToSignIn()
    {
        var app = await StartAsync();
        var response = await app.Client().GetAsync("/Staff/Panels");
        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        Assert.StartsWith("/Account/Login", response.Headers.Location?.PathAndQuery, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task Api_NoKeyOrUnknownKey_Is401_ValidKeyNamesRole()
    {
        var app = await StartAsync();
        Assert.Equal(HttpStatusCode.Unauthorized, (await app.Client().GetAsync("/api/me")).StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await app.Client("prk_not-a-real-key").GetAsync("/api/me")).StatusCode);
        var staff = await app.StaffClientAsync(Roles.Reviewer);
        var me = await staff.GetFromJsonAsync<MeDto>("/api/me");
        Assert.Equal([Roles.Reviewer], me!.Roles);
    }

    [SkippableFact]
    public async Task CreateApiKeyCommand_FreshDatabase_MigratesAndPrintsAWorkingKey()
    {
        var connection = await NewConnectionAsync();
        var output = await RunEntryPointAsync(connection, ["create-api-key", "--name", "model-sync", "--role", "Facilitator"]);
        var key = output.Split('\n').Select(l => l.Trim()).Single(l => l.StartsWith("prk_", StringComparison.Ordinal));

        var app = await StartAsync(connectionString: connection);
        var stored = await app.WithDbAsync(db => db.ApiKeys.SingleAsync(k => k.Name == "model-sync"));
        Assert.NotEqual(key, stored.KeyHash);
        Assert.DoesNotContain(key, stored.KeyHash, StringComparison.Ordinal);
        var me = await app.Client(key).GetFromJsonAsync<MeDto>("/api/me");
        Assert.Equal([Roles.Facilitator], me!.Roles);
    }

    [SkippableFact]
    public async Task CreateAdminCommand_PasswordOnStdin_AdminCanSignInOnThePage()
    {
        var connection = await NewConnectionAsync();
        await RunEntryPointAsync(connection, ["create-admin", "--email", "ops@panel.example", "--password-stdin"], "a-long-admin-pass-42\n");
        var app = await StartAsync(connectionString: connection);
        var client = app.Client();
        var form = await client.GetStringAsync("/Account/Login");
        var token = AntiForgery().Match(form).Groups[1].Value;
        var response = await client.PostAsync("/Account/Login", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Input.Email"] = "ops@panel.example",
            ["Input.Password"] = "a-long-admin-pass-42",
            ["__RequestVerificationToken"] = token,
        }));
        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        var me = await client.GetFromJsonAsync<MeDto>("/api/me");
        Assert.Equal("ops@panel.example", me!.Name);
        Assert.Contains(Roles.Administrator, me.Roles);
    }

    [SkippableFact]
    public async Task Demo_LoadedIntoEmptyDatabase_HasTheScenarioAndSurvivesRestart()
    {
        var demo = new Dictionary<string, string?> { ["Demo:Enabled"] = "true", ["Demo:Folder"] = Path.Combine(AppContext.BaseDirectory, "demo-data") };
        var connection = await NewConnectionAsync();
        var first = await StartAsync(demo, connection);
        var counts = await first.WithDbAsync(async db => new
        {
            Experts = await db.Experts.CountAsync(),
            Panels = await db.Panels.CountAsync(),
            Indicators = await db.Indicators.CountAsync(),
            Estimates = await db.Estimates.CountAsync(),
            Users = await db.Users.CountAsync(),
        });
        Assert.True(counts.Experts >= 12);
        Assert.Equal(4, counts.Panels);
        // Seven annual series (with the capital value of the running panel's relation) and the ten
        // quarterly figures behind the running panel's calibration questions.
        Assert.Equal(17, counts.Indicators);
        Assert.Equal(3, counts.Users);
        await first.DisposeAsync();

        var second = await StartAsync(demo, connection);
        var again = await second.WithDbAsync(async db => new { Panels = await db.Panels.CountAsync(), Estimates = await db.Estimates.CountAsync() });
        Assert.Equal(counts.Panels, again.Panels);
        Assert.Equal(counts.Estimates, again.Estimates);
    }

    private Task<string> NewConnectionAsync() => NewDatabaseAsync();

    private async Task<string> RunEntryPointAsync(string connection, string[] args, string? stdin = null)
    {
        var dll = Path.Combine(AppContext.BaseDirectory, "PanelRound.Web.dll");
        var psi = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, RedirectStandardInput = true, WorkingDirectory = AppContext.BaseDirectory };
        psi.ArgumentList.Add(dll);
        foreach (var a in args)
        {
            psi.ArgumentList.Add(a);
        }
        psi.Environment["Database__Provider"] = Provider.ToString();
        psi.Environment[Provider == DatabaseProvider.Postgres ? "ConnectionStrings__Postgres" : "ConnectionStrings__Sqlite"] = connection;
        psi.Environment["ASPNETCORE_ENVIRONMENT"] = "Testing";
        using var p = Process.Start(psi)!;
        if (stdin is not null)
        {
            await p.StandardInput.WriteAsync(stdin);
        }
        p.StandardInput.Close();
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        await p.WaitForExitAsync();
        Assert.True(p.ExitCode == 0, $"{string.Join(' ', args)} exited {p.ExitCode}: {await stderr}\n{await stdout}");
        return await stdout;
    }

    [GeneratedRegex("name=\"__RequestVerificationToken\" type=\"hidden\" value=\"([^\"]+)\"")]
    private static partial Regex AntiForgery();

    private sealed record MeDto(string Name, List<string> Roles, string Scheme);
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteFoundationTests(SqliteFixture fixture) : FoundationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresFoundationTests(PostgresFixture fixture) : FoundationTests(fixture);
