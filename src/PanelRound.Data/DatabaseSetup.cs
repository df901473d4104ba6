using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Npgsql;

namespace PanelRound.Data;

/// <summary>The two supported database providers.</summary>
public enum DatabaseProvider
{
    /// <summary>The embedded default: one file, migrated at start.</summary>
    Sqlite,

    /// <summary>Production: PostgreSQL through Npgsql.</summary>
    Postgres,
}

/// <summary>The <c>Database</c> configuration section.</summary>
public sealed class DatabaseOptions
{
    public const string Section = "Database";

    /// <summary><c>Database:Provider</c>: <c>Sqlite</c> (default) or <c>Postgres</c>.</summary>
    public DatabaseProvider Provider { get; set; } = DatabaseProvider.Sqlite;

    /// <summary>
    /// <c>Database:MigrateOnStart</c>: apply pending migrations when the app starts. SQLite always
    /// does; for PostgreSQL it is off unless set, so that a production schema changes by an
    /// explicit step (<c>dotnet run --project src/PanelRound.Web -- migrate</c>) or by choice.
    /// </summary>
    public bool MigrateOnStart { get; set; }
}

public static class DatabaseSetup
{
    public const string DefaultSqliteConnection = "Data Source=App_Data/panelround.db";

    /// <summary>Reads <c>Database:Provider</c> and the matching connection string and registers the DbContext.</summary>
    public static IHostApplicationBuilder AddPanelRoundData(this IHostApplicationBuilder builder)
    {
        var options = ReadOptions(builder.Configuration);
        builder.Services.AddSingleton(options);
        var connection = ConnectionString(builder.Configuration, options.Provider, builder.Environment.ContentRootPath);
        // Pooled: a request reuses a reset context instead of building one (the context holds no state of its own).
        builder.Services.AddDbContextPool<PanelRoundDbContext>(o => Configure(o, options.Provider, connection));
        return builder;
    }

    public static DatabaseOptions ReadOptions(IConfiguration configuration)
    {
        var options = new DatabaseOptions();
        var raw = configuration[$"{DatabaseOptions.Section}:Provider"];
        if (!string.IsNullOrWhiteSpace(raw))
        {
            options.Provider = Enum.TryParse<DatabaseProvider>(raw.Trim(), ignoreCase: true, out var p)
                ? p
                : throw new InvalidOperationException($"Database:Provider is '{raw}': use Sqlite or Postgres.");
        }
        var migrate = configuration[$"{DatabaseOptions.Section}:MigrateOnStart"];
        if (!string.IsNullOrWhiteSpace(migrate))
        {
            options.MigrateOnStart = bool.TryParse(migrate, out var m)
                ? m
                : throw new InvalidOperationException($"Database:MigrateOnStart is '{migrate}': use true or false.");
        }
        return options;
    }

    public static string ConnectionString(IConfiguration configuration, DatabaseProvider provider, string contentRoot)
    {
        if (provider == DatabaseProvider.Postgres)
        {
            var pg = configuration.GetConnectionString("Postgres");
            return string.IsNullOrWhiteSpace(pg)
                ? throw new InvalidOperationException("Database:Provider is Postgres but ConnectionStrings:Postgres is empty (set ConnectionStrings__Postgres).")
                : WithAutoPrepare(pg);
        }
        var raw = configuration.GetConnectionString("Sqlite");
        var builder = new SqliteConnectionStringBuilder(string.IsNullOrWhiteSpace(raw) ? DefaultSqliteConnection : raw);
        if (builder.DataSource != ":memory:" && !builder.DataSource.StartsWith("file:", StringComparison.Ordinal))
        {
            var path = Path.IsPathRooted(builder.DataSource) ? builder.DataSource : Path.Combine(contentRoot, builder.DataSource);
            Directory.CreateDirectory(Path.GetDirectoryName(Path.GetFullPath(path))!);
            builder.DataSource = Path.GetFullPath(path);
        }
        builder.ForeignKeys = true;
        return builder.ToString();
    }

    /// <summary>The statements the app repeats most are prepared on each connection after a few uses:
    /// <c>Max Auto Prepare</c> is 64 unless the connection string sets it (0 turns it off, e.g. behind
    /// a pooler in transaction mode).</summary>
    public static string WithAutoPrepare(string connectionString) =>
        connectionString.Contains("auto prepare", StringComparison.OrdinalIgnoreCase)
            ? connectionString
            : new NpgsqlConnectionStringBuilder(connectionString) { MaxAutoPrepare = 64 }.ToString();

    public static void Configure(DbContextOptionsBuilder options, DatabaseProvider provider, string connectionString)
    {
        if (provider == DatabaseProvider.Postgres)
        {
            options.UseNpgsql(connectionString, o => o.MigrationsAssembly("PanelRound.Migrations.Postgres"));
        }
        else
        {
            options.UseSqlite(connectionString, o => o.MigrationsAssembly("PanelRound.Migrations.Sqlite"));
        }
    }

    /// <summary>
    /// Applies the migrations when this provider migrates at start (always for SQLite) and sets
    /// SQLite's write-ahead log so readers do not block the writer.
    /// </summary>
    public static async Task PrepareAsync(IServiceProvider services, CancellationToken ct = default)
    {
        using var scope = services.CreateScope();
        var options = scope.ServiceProvider.GetRequiredService<DatabaseOptions>();
        var db = scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>();
        if (options.Provider == DatabaseProvider.Sqlite || options.MigrateOnStart)
        {
            await db.Database.MigrateAsync(ct);
        }
        if (options.Provider == DatabaseProvider.Sqlite)
        {
            await db.Database.ExecuteSqlRawAsync("PRAGMA journal_mode=WAL;", ct);
        }
    }
}
