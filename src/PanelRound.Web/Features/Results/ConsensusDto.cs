using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Results;

/// <summary>A published consensus entry as the results show it, with its ids.</summary>
public sealed record ConsensusEntryDto(long Id, int PanelId, int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt)
{
    public static ConsensusEntryDto From(ConsensusEntry c) => new(c.Id, c.PanelId, c.QuestionId, c.Period, c.Value, c.Low, c.High, c.N, c.Method, c.PublishedAt);
}

/// <summary>A published consensus entry as the consensus list shows it.</summary>
public sealed record ConsensusDto(int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt)
{
    public static ConsensusDto From(ConsensusEntry c) => new(c.QuestionId, c.Period, c.Value, c.Low, c.High, c.N, c.Method, c.PublishedAt);
}
