using Microsoft.Data.Sqlite;
using Npgsql;
using PanelRound.Data;
using Respawn;
using Respawn.Graph;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>
/// One per provider collection: new databases on demand, and one shared host that every test
/// with the default settings uses in turn (the tests of a collection run one after another).
/// </summary>
public interface IDatabaseFixture
{
    DatabaseProvider Provider { get; }

    /// <summary>A connection string to a new, empty database (skips the test when the provider is unavailable outside CI).</summary>
    Task<string> NewDatabaseAsync();

    /// <summary>
    /// The provider's shared host for these settings (one per distinct set, e.g. per environment),
    /// with its database emptied, its clock at the real time and its outbox empty.
    /// </summary>
    Task<TestApp> SharedAppAsync(IReadOnlyDictionary<string, string?>? settings = null);

    /// <summary>
    /// The provider's host with the demo loaded once (from the demo-data folder beside the tests).
    /// Tests on it read: apart from the API keys and staff users they add for themselves, they change nothing.
    /// </summary>
    Task<TestApp> DemoAppAsync();
}

/// <summary>The shared host and its reset; a subclass per provider says how to empty the database.</summary>
public abstract class DatabaseFixture : IDatabaseFixture, IAsyncLifetime
{
    /// <summary>
    /// Tables that survive a reset: the migration history (the schema stays) and the data-protection
    /// keys (the running host keeps its key ring in memory; cookies it issued stay readable).
    /// </summary>
    public static readonly string[] KeptTables = ["__EFMigrationsHistory", "DataProtectionKeys"];

    /// <summary>
    /// The shared host's settings beyond the defaults: failed sign-ins are never slowed (the
    /// slow-down waits on the app's clock, which stands still here; its own tests run on a host of
    /// their own with the real clock).
    /// </summary>
    private static readonly Dictionary<string, string?> SharedSettings = new() { ["StaffSignIn:FreeFailures"] = "1000000" };

    private readonly Dictionary<string, TestApp> _shared = new(StringComparer.Ordinal);

    private readonly SemaphoreSlim _demoGate = new(1, 1);

    private TestApp? _demo;

    /// <summary>The demo files the tests read (copied beside the test assembly).</summary>
    public static string DemoFolder { get; } = Path.Combine(AppContext.BaseDirectory, "demo-data");

    public abstract DatabaseProvider Provider { get; }

    public abstract Task<string> NewDatabaseAsync();

    public async Task<TestApp> SharedAppAsync(IReadOnlyDictionary<string, string?>? settings = null)
    {
        var all = new Dictionary<string, string?>(SharedSettings);
        foreach (var (k, v) in settings ?? new Dictionary<string, string?>())
        {
            all[k] = v;
        }
        var key = string.Join('\n', all.OrderBy(kv => kv.Key, StringComparer.Ordinal).Select(kv => $"{kv.Key}={kv.Value}"));
        if (!_shared.TryGetValue(key, out var app))
        {
            app = new TestApp(Provider, await NewDatabaseAsync(), all, clock: new TestClock());
            _ = app.Server;
            _shared[key] = app;
        }
        else
        {
            await EmptyDatabaseAsync(app.ConnectionString);
            app.Clock!.Restart();
        }
        if (Directory.Exists(app.OutboxFolder))
        {
            Directory.Delete(app.OutboxFolder, recursive: true);
        }
        Directory.CreateDirectory(app.OutboxFolder);
        return app;
    }

    public async Task<TestApp> DemoAppAsync()
    {
        await _demoGate.WaitAsync();
        try
        {
            if (_demo is null)
            {
                var app = new TestApp(Provider, await NewDatabaseAsync(), new Dictionary<string, string?> { ["Demo:Enabled"] = "true", ["Demo:Folder"] = DemoFolder });
                _ = app.Server;
                _demo = app;
            }
            return _demo;
        }
        finally
        {
            _demoGate.Release();
        }
    }

    /// <summary>Deletes every row except those of <see cref="KeptTables"/>; identities start at 1 again, as in a new database.</summary>
    protected abstract Task EmptyDatabaseAsync(string connectionString);

    public Task InitializeAsync() => Task.CompletedTask;

    public virtual async Task DisposeAsync()
    {
        foreach (var app in _shared.Values.Append(_demo).OfType<TestApp>())
        {
            await app.DisposeAsync();
        }
        _demoGate.Dispose();
    }
}

public sealed class SqliteFixture : DatabaseFixture
{
    private readonly string _folder = Path.Combine(Path.GetTempPath(), "panelround-tests-" + Guid.NewGuid().ToString("N")[..12]);

    public override DatabaseProvider Provider => DatabaseProvider.Sqlite;

    public override Task<string> NewDatabaseAsync()
    {
        Directory.CreateDirectory(_folder);
        return Task.FromResult($"Data Source={Path.Combine(_folder, Guid.NewGuid().ToString("N") + ".db")}");
    }

    /// <remarks>
    /// Implementation note: Respawn has no SQLite adapter; this does the same: foreign keys off on
    /// this connection (and on again before it returns to the pool the app shares), every table
    /// emptied in one transaction, and the AUTOINCREMENT counters dropped.
    /// </remarks>
    protected override async Task EmptyDatabaseAsync(string connectionString)
    {
        await using var conn = new SqliteConnection(connectionString);
        await conn.OpenAsync();
        var tables = new List<string>();
        await using (var list = conn.CreateCommand())
        {
            list.CommandText = "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'";
            await using var reader = await list.ExecuteReaderAsync();
            while (await reader.ReadAsync())
            {
                var name = reader.GetString(0);
                if (!KeptTables.Contains(name, StringComparer.Ordinal))
                {
                    tables.Add(name);
                }
            }
        }
        var hasSequence = await ScalarAsync(conn, "SELECT count(*) FROM sqlite_master WHERE name = 'sqlite_sequence'") > 0;
        var sql = "PRAGMA foreign_keys = OFF; BEGIN; "
            + string.Concat(tables.Select(t => $"DELETE FROM \"{t}\"; "))
            + (hasSequence ? "DELETE FROM sqlite_sequence; " : "")
            + "COMMIT; PRAGMA foreign_keys = ON;";
        await using var empty = conn.CreateCommand();
        empty.CommandText = sql;
        await empty.ExecuteNonQueryAsync();
    }

    private static async Task<long> ScalarAsync(SqliteConnection conn, string sql)
    {
        await using var cmd = conn.CreateCommand();
        cmd.CommandText = sql;
        return (long)(await cmd.ExecuteScalarAsync())!;
    }

    public override async Task DisposeAsync()
    {
        await base.DisposeAsync();
        SqliteConnection.ClearAllPools();
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

public sealed class PostgresFixture : DatabaseFixture
{
    private Respawner? _respawner;

    public override DatabaseProvider Provider => DatabaseProvider.Postgres;

    public override async Task<string> NewDatabaseAsync()
    {
        var reason = PostgresServer.UnavailableReason();
        Skip.If(reason is not null && !PostgresServer.IsCi, reason);
        return await PostgresServer.CreateDatabaseAsync("prt");
    }

    protected override async Task EmptyDatabaseAsync(string connectionString)
    {
        await using var conn = new NpgsqlConnection(connectionString);
        await conn.OpenAsync();
        _respawner ??= await Respawner.CreateAsync(conn, new RespawnerOptions
        {
            DbAdapter = DbAdapter.Postgres,
            SchemasToInclude = ["public"],
            TablesToIgnore = KeptTables.Select(t => new Table(t)).ToArray(),
            WithReseed = true,
        });
        await _respawner.ResetAsync(conn);
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
