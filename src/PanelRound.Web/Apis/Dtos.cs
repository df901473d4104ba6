using PanelRound.Data.Entities;

namespace PanelRound.Web.Apis;

public sealed record IndicatorDto(int Id, string Key, string Name, string UnitLabel, int Decimals, string? Description)
{
    public static IndicatorDto From(Indicator i) => new(i.Id, i.Key, i.Name, i.UnitLabel, i.Decimals, i.Description);
}

public sealed record ObservationDto(string Period, double Value, string? Source, DateOnly? ObservedOn, DateTime RecordedAt)
{
    public static ObservationDto From(Observation o) => new(o.Period, o.Value, o.Source, o.ObservedOn, o.RecordedAt);
}

public sealed record ExpertDto(int Id, string Name, string Email, string? Affiliation, string? Expertise, string? DeclaredInterests, string? ExternalKey)
{
    public static ExpertDto From(Expert e) => new(e.Id, e.Name, e.Email, e.Affiliation, e.Expertise, e.DeclaredInterests, e.ExternalKey);
}

public sealed record QuestionDto(int Id, int IndicatorId, int Order, string Label, string? HelpText, string Format,
    double? HardMin, double? HardMax, double? PlausibleMin, double? PlausibleMax, IReadOnlyList<string> TargetPeriods)
{
    public static QuestionDto From(Question q) => new(q.Id, q.IndicatorId, q.Order, q.Label, q.HelpText, q.Format.ToString(),
        q.HardMin, q.HardMax, q.PlausibleMin, q.PlausibleMax, q.TargetPeriods.Split(','));
}

public sealed record RoundDto(int Number, string State, DateTime OpensAt, DateTime ClosesAt, DateTime? ClosedAt)
{
    public static RoundDto From(Round r) => new(r.Number, r.State.ToString(), r.OpensAt, r.ClosesAt, r.ClosedAt);
}

public sealed record PanelDto(int Id, string Title, string Brief, DateOnly StartsOn, IReadOnlyList<string> TargetPeriods, string State,
    PanelSettings Settings, DateTime CreatedAt, DateTime? ConcludedAt, IReadOnlyList<QuestionDto> Questions, IReadOnlyList<RoundDto> Rounds)
{
    public static PanelDto From(Panel p) => new(p.Id, p.Title, p.Brief, p.StartsOn, p.TargetPeriods.Split(','), p.State.ToString(), p.Settings,
        p.CreatedAt, p.ConcludedAt, p.Questions.OrderBy(q => q.Order).Select(QuestionDto.From).ToList(),
        p.Rounds.OrderBy(r => r.Number).Select(RoundDto.From).ToList());
}

/// <summary>A membership as staff see it in the API: the panel code and state; the expert's name only through the roster.</summary>
public sealed record MembershipDto(int Id, int ExpertId, string PanelCode, string State, DateTime TokenIssuedAt, DateTime? LastSeenAt);

public sealed record LinkDto(int MembershipId, string PanelCode, string Token, string Link);

/// <summary>One published consensus value; <c>band</c> says what low and high are (P10-P90 or Q1-Q3); <c>round</c> is the round it came from.</summary>
public sealed record ConsensusDto(int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt,
    string Question, string Indicator, string Unit, string Format, string Band, int Round)
{
    public static ConsensusDto From(Reports.ConsensusRow r) =>
        new(r.QuestionId, r.Period, r.Consensus, r.Low, r.High, r.N, r.Method, r.PublishedAt, r.Question, r.Indicator, r.Unit, r.Format, r.Band, r.Round);
}

public sealed record TrackerDto(int Round, string State, DateTime ClosesAt, int Members, int Responded, IReadOnlyList<string> RespondedCodes, IReadOnlyList<string> PendingCodes);

public sealed record AuditDto(long Id, DateTime At, string Actor, string Action, string EntityType, string EntityId, int? PanelId, string? Details);
