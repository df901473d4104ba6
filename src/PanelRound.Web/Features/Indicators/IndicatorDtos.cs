using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Indicators;

public sealed record IndicatorDto(int Id, string Key, string Name, string UnitLabel, int Decimals, string? Description)
{
    public static IndicatorDto From(Indicator i) => new(i.Id, i.Key, i.Name, i.UnitLabel, i.Decimals, i.Description);
}

public sealed record ObservationDto(string Period, double Value, string? Source, DateOnly? ObservedOn, DateTime RecordedAt)
{
    public static ObservationDto From(Observation o) => new(o.Period, o.Value, o.Source, o.ObservedOn, o.RecordedAt);
}
