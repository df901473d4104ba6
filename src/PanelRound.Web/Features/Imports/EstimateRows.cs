using Microsoft.Data.Sqlite;
using Microsoft.EntityFrameworkCore;
using Microsoft.EntityFrameworkCore.Metadata;
using Microsoft.EntityFrameworkCore.Storage;
using Npgsql;
using NpgsqlTypes;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Imports;

/// <summary>A submitted estimate to store in bulk (no rationale, no confidence, not a draft).</summary>
public readonly record struct EstimateRow(
    int RoundId, int MembershipId, int QuestionId, string Period, double? Value, double? P10, double? P50, double? P90, DateTime CreatedAt);

/// <summary>
/// Stores many estimates at once inside the unit of work's open transaction, without the change
/// tracker: PostgreSQL's binary COPY on its connection, or on SQLite one prepared INSERT run for
/// each row. The rows are pulled one at a time, so memory does not grow with their number.
/// </summary>
public static class EstimateRows
{
    /// <summary>Stores the rows in the transaction that <paramref name="db"/> has open; returns how many.</summary>
    public static async Task<int> InsertAsync(PanelRoundDbContext db, IEnumerable<EstimateRow> rows, CancellationToken ct = default)
    {
        var transaction = db.Database.CurrentTransaction?.GetDbTransaction()
            ?? throw new InvalidOperationException("Estimates are stored in bulk only inside a transaction.");
        var entity = db.Model.FindEntityType(typeof(Estimate))!;
        var store = StoreObjectIdentifier.Table(entity.GetTableName()!, entity.GetSchema());
        string Column(string property) => "\"" + entity.FindProperty(property)!.GetColumnName(store) + "\"";
        var table = (entity.GetSchema() is { } schema ? $"\"{schema}\"." : "") + $"\"{store.Name}\"";
        var columns = string.Join(", ", new[]
        {
            nameof(Estimate.RoundId), nameof(Estimate.MembershipId), nameof(Estimate.QuestionId), nameof(Estimate.Period),
            nameof(Estimate.Value), nameof(Estimate.P10), nameof(Estimate.P50), nameof(Estimate.P90), nameof(Estimate.IsDraft), nameof(Estimate.CreatedAt),
        }.Select(Column));
        return transaction.Connection switch
        {
            NpgsqlConnection pg => await CopyAsync(pg, table, columns, rows, ct),
            SqliteConnection sqlite => Insert(sqlite, (SqliteTransaction)transaction, table, columns, rows),
            var other => throw new NotSupportedException($"No bulk insert for {other?.GetType().Name}."),
        };
    }

    private static async Task<int> CopyAsync(NpgsqlConnection connection, string table, string columns, IEnumerable<EstimateRow> rows, CancellationToken ct)
    {
        var count = 0;
        // Implementation note: COPY on the connection runs inside its open transaction, so a later error rolls these rows back too.
        await using var copy = await connection.BeginBinaryImportAsync($"COPY {table} ({columns}) FROM STDIN (FORMAT BINARY)", ct);
        foreach (var row in rows)
        {
            await copy.StartRowAsync(ct);
            await copy.WriteAsync(row.RoundId, NpgsqlDbType.Integer, ct);
            await copy.WriteAsync(row.MembershipId, NpgsqlDbType.Integer, ct);
            await copy.WriteAsync(row.QuestionId, NpgsqlDbType.Integer, ct);
            await copy.WriteAsync(row.Period, NpgsqlDbType.Varchar, ct);
            await WriteAsync(copy, row.Value, ct);
            await WriteAsync(copy, row.P10, ct);
            await WriteAsync(copy, row.P50, ct);
            await WriteAsync(copy, row.P90, ct);
            await copy.WriteAsync(false, NpgsqlDbType.Boolean, ct);
            await copy.WriteAsync(row.CreatedAt, NpgsqlDbType.TimestampTz, ct);
            count++;
        }
        await copy.CompleteAsync(ct);
        return count;
    }

    private static async Task WriteAsync(NpgsqlBinaryImporter copy, double? value, CancellationToken ct)
    {
        if (value is { } v)
        {
            await copy.WriteAsync(v, NpgsqlDbType.Double, ct);
        }
        else
        {
            await copy.WriteNullAsync(ct);
        }
    }

    private static int Insert(SqliteConnection connection, SqliteTransaction transaction, string table, string columns, IEnumerable<EstimateRow> rows)
    {
        using var insert = connection.CreateCommand();
        insert.Transaction = transaction;
        insert.CommandText = $"INSERT INTO {table} ({columns}) VALUES ($round, $membership, $question, $period, $value, $p10, $p50, $p90, 0, $created)";
        var round = insert.Parameters.Add("$round", SqliteType.Integer);
        var membership = insert.Parameters.Add("$membership", SqliteType.Integer);
        var question = insert.Parameters.Add("$question", SqliteType.Integer);
        var period = insert.Parameters.Add("$period", SqliteType.Text);
        var value = insert.Parameters.Add("$value", SqliteType.Real);
        var p10 = insert.Parameters.Add("$p10", SqliteType.Real);
        var p50 = insert.Parameters.Add("$p50", SqliteType.Real);
        var p90 = insert.Parameters.Add("$p90", SqliteType.Real);
        // Bound as EF Core binds a DateTime (Microsoft.Data.Sqlite writes it as text, yyyy-MM-dd HH:mm:ss.FFFFFFF).
        var created = insert.Parameters.Add("$created", SqliteType.Text);
        insert.Prepare();
        var count = 0;
        foreach (var row in rows)
        {
            round.Value = row.RoundId;
            membership.Value = row.MembershipId;
            question.Value = row.QuestionId;
            period.Value = row.Period;
            value.Value = (object?)row.Value ?? DBNull.Value;
            p10.Value = (object?)row.P10 ?? DBNull.Value;
            p50.Value = (object?)row.P50 ?? DBNull.Value;
            p90.Value = (object?)row.P90 ?? DBNull.Value;
            created.Value = row.CreatedAt;
            insert.ExecuteNonQuery();
            count++;
        }
        return count;
    }
}
