using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>Helpers shared by the security tests: the row count of every table, in one query.</summary>
internal static class SecurityKit
{
    /// <summary>The tables of the app's model, in name order.</summary>
    public static Task<List<string>> TablesAsync(TestApp app) => app.WithDbAsync(db => Task.FromResult(
        db.Model.GetEntityTypes().Select(t => t.GetTableName()).OfType<string>().Distinct().Order(StringComparer.Ordinal).ToList()));

    /// <summary>
    /// "Table=count, ..." for every table of the model, read in one statement. Every state change
    /// writes an audit event in the same save, so a change that only updates rows still shows here.
    /// </summary>
    public static async Task<string> RowCountsAsync(TestApp app, IReadOnlyList<string> tables)
    {
        var sql = "SELECT " + string.Join(" || ',' || ", tables.Select(t => $"'{t}=' || (SELECT COUNT(*) FROM \"{t}\")")) + " AS \"Value\"";
        return await app.WithDbAsync(db => db.Database.SqlQueryRaw<string>(sql).SingleAsync());
    }

    public static string Invariant(this int v) => v.ToString(CultureInfo.InvariantCulture);

    public static string Invariant(this double v) => v.ToString("R", CultureInfo.InvariantCulture);
}
