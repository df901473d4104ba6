namespace PanelRound.Data.Entities;

/// <summary>A market series that outlives any panel; it has a unit and observations.</summary>
public class Indicator
{
    public int Id { get; set; }

    /// <summary>A stable key used in CSV files and the API, e.g. <c>apt-price-old-harbour</c>.</summary>
    public string Key { get; set; } = "";

    public string Name { get; set; } = "";

    /// <summary>The unit as shown, e.g. <c>EUR/m²</c> or <c>%</c>.</summary>
    public string UnitLabel { get; set; } = "";

    /// <summary>Decimals shown for its values.</summary>
    public int Decimals { get; set; }

    public string? Description { get; set; }

    public DateTime CreatedAt { get; set; }

    public List<Observation> Observations { get; set; } = [];
}

/// <summary>
/// An indicator's value for one period, with its source. Corrections keep history: a correction
/// adds a row and marks the row it replaces as superseded, so the current value of a period is
/// the row whose <see cref="SupersededAt"/> is null.
/// </summary>
public class Observation
{
    public long Id { get; set; }

    public int IndicatorId { get; set; }

    public Indicator? Indicator { get; set; }

    /// <summary>The period's text form, <c>2027</c> or <c>2027Q3</c>.</summary>
    public string Period { get; set; } = "";

    /// <summary>Orders periods by time (see <c>Period.SortKey</c> in the core).</summary>
    public int PeriodSortKey { get; set; }

    public double Value { get; set; }

    public string? Source { get; set; }

    /// <summary>When the value became known (the outcome's date), if given.</summary>
    public DateOnly? ObservedOn { get; set; }

    public DateTime RecordedAt { get; set; }

    public string? RecordedBy { get; set; }

    public DateTime? SupersededAt { get; set; }
}
