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
    public TestApp(DatabaseProvider provider, string connectionString, IDictionary<string, string?>? extra = null, Action<IServiceCollection>? testServices = null, TestClock? clock = null)
    {
        _testServices = testServices;
        Clock = clock;
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
            // Plain HTTP in the test server; the tests of these protections turn them back on.
            ["Security:SecureCookies"] = "false",
            ["RateLimits:Enabled"] = "false",
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

    /// <summary>The app's clock when the test controls time (the shared host), otherwise null (the system clock).</summary>
    public TestClock? Clock { get; }

    /// <summary>The folder the app writes its mail to (the Mail:OutboxFolder setting).</summary>
    public string OutboxFolder => _settings["Mail:OutboxFolder"]!;

    protected override void ConfigureWebHost(IWebHostBuilder builder)
    {
        // "Test:Environment" runs the app as Development or Production where a test is about the environment.
        builder.UseEnvironment(_settings.TryGetValue(EnvironmentSetting, out var environment) && environment is { Length: > 0 } ? environment : "Testing");
        foreach (var (k, v) in _settings)
        {
            builder.UseSetting(k, v);
        }
        if (Clock is not null)
        {
            builder.ConfigureTestServices(services => services.AddSingleton<TimeProvider>(Clock));
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

