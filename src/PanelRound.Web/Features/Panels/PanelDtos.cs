using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Panels;

public sealed record QuestionDto(int Id, int IndicatorId, int Order, string Label, string? HelpText, string Format,
    double? HardMin, double? HardMax, double? PlausibleMin, double? PlausibleMax, IReadOnlyList<string> TargetPeriods,
    bool Calibration = false, double? TrueValue = null, DateTime? TrueValueRecordedAt = null, bool LogScale = false)
{
    public static QuestionDto From(Question q) => new(q.Id, q.IndicatorId, q.Order, q.Label, q.HelpText, q.Format.ToString(),
        q.HardMin, q.HardMax, q.PlausibleMin, q.PlausibleMax, q.TargetPeriods.Split(','), q.IsCalibration, q.TrueValue, q.TrueValueRecordedAt, q.LogScale);
}

/// <summary>A panel's settings as the API shows them (rules and weighting by name, shares as fractions; a null calibration cut-off is the optimised one).</summary>
public sealed record PanelSettingsDto(
    OutlierRuleSetting OutlierRule, double TrimFraction, double ConsensusThreshold, double StabilityThreshold, int RoundCap, int MinimumGroupSize,
    bool ShowRationales, bool OutliersMustJustify, ConsensusWeighting Weighting,
    bool ShowBenchmarkToExperts = false, string ExpertBenchmark = "naive", int BenchmarkWindow = 3, double RelationTolerance = 0.05,
    double? CalibrationCutoff = null, double CalibrationOvershoot = 0.10, bool CalibrationUsesFirstRound = false)
{
    public static PanelSettingsDto From(PanelSettings s) => new(
        s.OutlierRule, s.TrimFraction, s.ConsensusThreshold, s.StabilityThreshold, s.RoundCap, s.MinimumGroupSize, s.ShowRationales, s.OutliersMustJustify, s.Weighting,
        s.ShowBenchmarkToExperts, s.ExpertBenchmark, s.BenchmarkWindow, s.RelationTolerance,
        s.CalibrationCutoff, s.CalibrationOvershoot, s.CalibrationUsesFirstRound);
}

public sealed record PanelDto(int Id, string Title, string Brief, DateOnly StartsOn, IReadOnlyList<string> TargetPeriods, string State,
    PanelSettingsDto Settings, DateTime CreatedAt, DateTime? ConcludedAt, IReadOnlyList<QuestionDto> Questions, IReadOnlyList<RoundDto> Rounds,
    string TimeZone = "UTC", string? ContactName = null, string? ContactEmail = null)
{
    public static PanelDto From(Panel p) => new(p.Id, p.Title, p.Brief, p.StartsOn, p.TargetPeriods.Split(','), p.State.ToString(), PanelSettingsDto.From(p.Settings),
        p.CreatedAt, p.ConcludedAt, p.Questions.OrderBy(q => q.Order).Select(QuestionDto.From).ToList(),
        p.Rounds.OrderBy(r => r.Number).Select(RoundDto.From).ToList(), p.TimeZone, p.ContactName, p.ContactEmail);
}
