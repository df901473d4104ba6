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

    /// <summary>The provider's shared host with its database emptied, its clock at the real time and its outbox empty.</summary>
    Task<TestApp> SharedAppAsync();
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

    private TestApp? _shared;

    public abstract DatabaseProvider Provider { get; }

    public abstract Task<string> NewDatabaseAsync();

    public async Task<TestApp> SharedAppAsync()
    {
        if (_shared is null)
        {
            var app = new TestApp(Provider, await NewDatabaseAsync(), SharedSettings, clock: new TestClock());
            _ = app.Server;
            _shared = app;
        }
        else
        {
            await EmptyDatabaseAsync(_shared.ConnectionString);
            _shared.Clock!.Restart();
        }
        if (Directory.Exists(_shared.OutboxFolder))
        {
            Directory.Delete(_shared.OutboxFolder, recursive: true);
        }
        Directory.CreateDirectory(_shared.OutboxFolder);
        return _shared;
    }

    /// <summary>Deletes every row except those of <see cref="KeptTables"/>; identities start at 1 again, as in a new database.</summary>
    protected abstract Task EmptyDatabaseAsync(string connectionString);

    public Task InitializeAsync() => Task.CompletedTask;

    public virtual async Task DisposeAsync()
    {
        if (_shared is not null)
        {
            await _shared.DisposeAsync();
        }
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
