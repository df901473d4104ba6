using Npgsql;
using PanelRound.Data;

namespace PanelRound.Web.Tests.Foundation;

/// <summary>The PostgreSQL connection string the app runs with: the operator's settings kept, statement preparation on by default.</summary>
public sealed class ConnectionSettingsTests
{
    [Fact]
    public void PostgresConnection_WithoutAutoPrepare_GetsIt_EverythingElseKept()
    {
        var b = new NpgsqlConnectionStringBuilder(DatabaseSetup.WithAutoPrepare("Host=db.internal;Port=5433;Database=panels;Username=app;Maximum Pool Size=40"));

        Assert.Equal(64, b.MaxAutoPrepare);
        Assert.Equal(("db.internal", 5433, "panels", "app", 40), (b.Host, b.Port, b.Database, b.Username, b.MaxPoolSize));
    }

    [Theory]
    [InlineData("Host=db;Max Auto Prepare=0", 0)]
    [InlineData("Host=db;max auto prepare=20", 20)]
    public void PostgresConnection_ThatSetsAutoPrepare_IsLeftAsGiven(string given, int expected)
    {
        Assert.Equal(given, DatabaseSetup.WithAutoPrepare(given));
        Assert.Equal(expected, new NpgsqlConnectionStringBuilder(DatabaseSetup.WithAutoPrepare(given)).MaxAutoPrepare);
    }
}
