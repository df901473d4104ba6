using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Indicators;

/// <summary>An indicator's observations from a CSV file or pasted rows. Pure: no database.</summary>
public static class ObservationCsv
{
    /// <summary>
    /// Reads observation rows from CSV (columns <c>period</c>, <c>value</c>, optional <c>source</c>,
    /// <c>observed_on</c>) as the other imports do (<see cref="CsvUploads"/>); errors are keyed by row (<c>row 3</c>).
    /// </summary>
    public static Result<IReadOnlyList<ObservationInput>> Parse(Stream csv)
    {
        var errors = new FieldErrors();
        var table = CsvUploads.Read(csv, errors);
        if (table is null || !CsvUploads.RequireColumns(table, errors, ["period", "value"], "source, observed_on"))
        {
            return Result<IReadOnlyList<ObservationInput>>.Invalid(errors);
        }
        var list = new List<ObservationInput>();
        foreach (var r in table.Rows)
        {
            var (value, observedOn) = CsvUploads.ReadValueAndObservedOn(r, errors);
            list.Add(new ObservationInput(r["period"], value, r["source"], observedOn));
        }
        return errors.Any ? Result<IReadOnlyList<ObservationInput>>.Invalid(errors) : Result<IReadOnlyList<ObservationInput>>.Ok(list);
    }
}
