using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Rounds;

/// <summary>A round as the API shows it.</summary>
public sealed record RoundDto(int Number, string State, DateTime OpensAt, DateTime ClosesAt, DateTime? ClosedAt)
{
    public static RoundDto From(Round r) => new(r.Number, r.State.ToString(), r.OpensAt, r.ClosesAt, r.ClosedAt);
}
