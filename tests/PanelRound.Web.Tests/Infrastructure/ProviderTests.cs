using PanelRound.Data;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>
/// Base of every test class that runs on both providers: a concrete subclass per provider
/// names the collection. Each test starts its own app on a new database, so no test depends on
/// another's data.
/// </summary>
public abstract class ProviderTests(IDatabaseFixture fixture) : IAsyncDisposable
{
    private readonly List<TestApp> _apps = [];

    protected DatabaseProvider Provider => fixture.Provider;

    /// <summary>A connection string to a new, empty database that no app has touched yet.</summary>
    protected Task<string> NewDatabaseAsync() => fixture.NewDatabaseAsync();

    /// <summary>Starts the app on a new database (or on the one given, to test a restart).</summary>
    protected async Task<TestApp> StartAsync(IDictionary<string, string?>? settings = null, string? connectionString = null)
    {
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
