using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Results;

public sealed record ConsensusDto(int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt)
{
    public static ConsensusDto From(ConsensusEntry c) => new(c.QuestionId, c.Period, c.Value, c.Low, c.High, c.N, c.Method, c.PublishedAt);
}
