using PanelRound.Data;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>
/// Base of every test class that runs on both providers: a concrete subclass per provider
/// names the collection. A test that starts the app with the default settings gets the
/// provider's shared host, emptied for it; a test that needs other settings, a database of its
/// own (a restart, the migrations) or a second app gets a host of its own on a new database.
/// Either way no test depends on another's data.
/// </summary>
public abstract class ProviderTests(IDatabaseFixture fixture) : IAsyncDisposable
{
    private readonly List<TestApp> _apps = [];

    private readonly HashSet<string> _sharedTaken = new(StringComparer.Ordinal);

    protected DatabaseProvider Provider => fixture.Provider;

    /// <summary>A connection string to a new, empty database that no app has touched yet.</summary>
    protected Task<string> NewDatabaseAsync() => fixture.NewDatabaseAsync();

    /// <summary>
    /// The app on an empty database: the shared host for these settings on the test's first call
    /// with them; a new host on a new database for a second app with the same settings, for the
    /// demo (see <see cref="StartDemoAsync"/> for the shared, read-only one), or on the database
    /// given (to test a restart).
    /// </summary>
    protected async Task<TestApp> StartAsync(IDictionary<string, string?>? settings = null, string? connectionString = null)
    {
        var key = string.Join('\n', (settings ?? new Dictionary<string, string?>()).OrderBy(kv => kv.Key, StringComparer.Ordinal).Select(kv => $"{kv.Key}={kv.Value}"));
        var demo = settings is not null && settings.TryGetValue("Demo:Enabled", out var enabled) && string.Equals(enabled, "true", StringComparison.OrdinalIgnoreCase);
        if (connectionString is null && !demo && _sharedTaken.Add(key))
        {
            return await fixture.SharedAppAsync(settings?.AsReadOnly());
        }
        var app = new TestApp(fixture.Provider, connectionString ?? await fixture.NewDatabaseAsync(), settings);
        _apps.Add(app);
        _ = app.Server;
        return app;
    }

    /// <summary>The shared host with the demo loaded; the test only reads (see <see cref="IDatabaseFixture.DemoAppAsync"/>).</summary>
    protected Task<TestApp> StartDemoAsync() => fixture.DemoAppAsync();

    public async ValueTask DisposeAsync()
    {
        foreach (var app in _apps)
        {
            await app.DisposeAsync();
        }
        GC.SuppressFinalize(this);
    }
}
