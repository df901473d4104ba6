using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Panels;

public sealed record QuestionDto(int Id, int IndicatorId, int Order, string Label, string? HelpText, string Format,
    double? HardMin, double? HardMax, double? PlausibleMin, double? PlausibleMax, IReadOnlyList<string> TargetPeriods)
{
    public static QuestionDto From(Question q) => new(q.Id, q.IndicatorId, q.Order, q.Label, q.HelpText, q.Format.ToString(),
        q.HardMin, q.HardMax, q.PlausibleMin, q.PlausibleMax, q.TargetPeriods.Split(','));
}

public sealed record PanelDto(int Id, string Title, string Brief, DateOnly StartsOn, IReadOnlyList<string> TargetPeriods, string State,
    PanelSettings Settings, DateTime CreatedAt, DateTime? ConcludedAt, IReadOnlyList<QuestionDto> Questions, IReadOnlyList<RoundDto> Rounds)
{
    public static PanelDto From(Panel p) => new(p.Id, p.Title, p.Brief, p.StartsOn, p.TargetPeriods.Split(','), p.State.ToString(), p.Settings,
        p.CreatedAt, p.ConcludedAt, p.Questions.OrderBy(q => q.Order).Select(QuestionDto.From).ToList(),
        p.Rounds.OrderBy(r => r.Number).Select(RoundDto.From).ToList());
}
