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

    private bool _sharedTaken;

    protected DatabaseProvider Provider => fixture.Provider;

    /// <summary>A connection string to a new, empty database that no app has touched yet.</summary>
    protected Task<string> NewDatabaseAsync() => fixture.NewDatabaseAsync();

    /// <summary>
    /// The app on an empty database: the shared host for the test's first call with the default
    /// settings; otherwise a new host with the settings on a new database (or on the one given,
    /// to test a restart).
    /// </summary>
    protected async Task<TestApp> StartAsync(IDictionary<string, string?>? settings = null, string? connectionString = null)
    {
        if (settings is null && connectionString is null && !_sharedTaken)
        {
            _sharedTaken = true;
            return await fixture.SharedAppAsync();
        }
        var app = new TestApp(fixture.Provider, connectionString ?? await fixture.NewDatabaseAsync(), settings);
        _apps.Add(app);
        _ = app.Server;
        return app;
    }

    public async ValueTask DisposeAsync()
    {
        foreach (var app in _apps)
        {
            await app.DisposeAsync();
        }
        GC.SuppressFinalize(this);
    }
}
