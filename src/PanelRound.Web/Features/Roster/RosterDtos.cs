using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Roster;

public sealed record ExpertDto(int Id, string Name, string Email, string? Affiliation, string? Expertise, string? DeclaredInterests, string? ExternalKey)
{
    public static ExpertDto From(Expert e) => new(e.Id, e.Name, e.Email, e.Affiliation, e.Expertise, e.DeclaredInterests, e.ExternalKey);
}

/// <summary>A membership as staff see it in the API: the panel code and state; the expert's name only through the roster.</summary>
public sealed record MembershipDto(int Id, int ExpertId, string PanelCode, string State, DateTime TokenIssuedAt, DateTime? LastSeenAt);

public sealed record LinkDto(int MembershipId, string PanelCode, string Token, string Link);
