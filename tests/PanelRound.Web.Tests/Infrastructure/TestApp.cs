using System.Net.Http.Headers;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>The app under test on one database provider, started with WebApplicationFactory.</summary>
public sealed class TestApp : WebApplicationFactory<Program>
{
    private readonly Dictionary<string, string?> _settings;

    private readonly Action<IServiceCollection>? _testServices;

    /// <summary>The app on a database, with extra settings and, optionally, services that replace the app's own (e.g. a mailer that fails).</summary>
    public TestApp(DatabaseProvider provider, string connectionString, IDictionary<string, string?>? extra = null, Action<IServiceCollection>? testServices = null)
    {
        _testServices = testServices;
        Provider = provider;
        ConnectionString = connectionString;
        _settings = new Dictionary<string, string?>
        {
            ["Database:Provider"] = provider.ToString(),
            [provider == DatabaseProvider.Postgres ? "ConnectionStrings:Postgres" : "ConnectionStrings:Sqlite"] = connectionString,
            ["Database:MigrateOnStart"] = "true",
            ["Demo:Enabled"] = "false",
            // Tests close rounds at their deadline explicitly (RoundDeadlineService.CloseDueRoundsAsync).
            ["Rounds:DeadlineCheckSeconds"] = "0",
            ["Mail:OutboxFolder"] = Path.Combine(Path.GetTempPath(), "panelround-test-outbox", Guid.NewGuid().ToString("N")),
        };
        foreach (var (k, v) in extra ?? new Dictionary<string, string?>())
        {
            _settings[k] = v;
        }
    }

    /// <summary>The setting that chooses the host environment (default "Testing").</summary>
    public const string EnvironmentSetting = "Test:Environment";

    public DatabaseProvider Provider { get; }

    public string ConnectionString { get; }

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        // "Test:Environment" runs the app as Development or Production where a test is about the environment.
        builder.UseEnvironment(_settings.TryGetValue(EnvironmentSetting, out var environment) && environment is { Length: > 0 } ? environment : "Testing");
        foreach (var (k, v) in _settings)
        {
            builder.UseSetting(k, v);
        }
        if (_testServices is not null)
        {
            builder.ConfigureTestServices(_testServices);
        }
    }

    /// <summary>Starts the app (migrating the database) and returns a client that does not follow redirects.</summary>
    public HttpClient Client(string? bearer = null)
    {
        var client = CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = true });
        if (bearer is not null)
        {
            client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", bearer);
        }
        return client;
    }

    /// <summary>A client authenticated with a fresh API key of the role.</summary>
    public async Task<HttpClient> StaffClientAsync(string role = Roles.Facilitator)
    {
        _ = Server;
        using var scope = Services.CreateScope();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        var key = await ApiKeys.CreateAsync(db, $"test-{role}-{Guid.NewGuid():N}", role, "test");
        return Client(key);
    }

    public async Task<T> WithDbAsync<T>(Func<PanelRoundDbContext, Task<T>> work)
    {
        _ = Server;
        using var scope = Services.CreateScope();
        return await work(scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>());
    }

    public Task WithDbAsync(Func<PanelRoundDbContext, Task> work) =>
        WithDbAsync(async db =>
        {
            await work(db);
            return true;
        });
}

/// <summary>One database per provider, a new database for each test.</summary>
public interface IDatabaseFixture
{
    DatabaseProvider Provider { get; }

    /// <summary>A connection string to a new, empty database (skips the test when the provider is unavailable outside CI).</summary>
    Task<string> NewDatabaseAsync();
}

public sealed class SqliteFixture : IDatabaseFixture, IDisposable
{
    private readonly string _folder = Path.Combine(Path.GetTempPath(), "panelround-tests-" + Guid.NewGuid().ToString("N")[..12]);

    public DatabaseProvider Provider => DatabaseProvider.Sqlite;

    public Task<string> NewDatabaseAsync()
    {
        Directory.CreateDirectory(_folder);
        return Task.FromResult($"Data Source={Path.Combine(_folder, Guid.NewGuid().ToString("N") + ".db")}");
    }

    public void Dispose()
    {
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        try
        {
            Directory.Delete(_folder, recursive: true);
        }
        catch (IOException)
        {
            // A file still open by a finaliser: the temp folder is cleaned by the system later.
        }
    }
}

public sealed class PostgresFixture : IDatabaseFixture
{
    public DatabaseProvider Provider => DatabaseProvider.Postgres;

    public async Task<string> NewDatabaseAsync()
    {
        var reason = PostgresServer.UnavailableReason();
        Skip.If(reason is not null && !PostgresServer.IsCi, reason);
        return await PostgresServer.CreateDatabaseAsync("prt");
    }
}

[CollectionDefinition(Name)]
public sealed class SqliteCollection : ICollectionFixture<SqliteFixture>
{
    public const string Name = "sqlite";
}

[CollectionDefinition(Name)]
public sealed class PostgresCollection : ICollectionFixture<PostgresFixture>
{
    public const string Name = "postgres";
}
