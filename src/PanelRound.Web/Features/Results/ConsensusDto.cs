using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Results;

/// <summary>A published consensus entry as the results show it, with its ids.</summary>
public sealed record ConsensusEntryDto(long Id, int PanelId, int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt)
{
    public static ConsensusEntryDto From(ConsensusEntry c) => new(c.Id, c.PanelId, c.QuestionId, c.Period, c.Value, c.Low, c.High, c.N, c.Method, c.PublishedAt);
}

/// <summary>One published consensus value; <c>band</c> says what low and high are (P10-P90 or Q1-Q3); <c>round</c> is the round it came from.</summary>
public sealed record ConsensusDto(int QuestionId, string Period, double Value, double Low, double High, int N, string Method, DateTime PublishedAt,
    string Question, string Indicator, string Unit, string Format, string Band, int Round)
{
    public static ConsensusDto From(Reports.ConsensusRow r) =>
        new(r.QuestionId, r.Period, r.Consensus, r.Low, r.High, r.N, r.Method, r.PublishedAt, r.Question, r.Indicator, r.Unit, r.Format, r.Band, r.Round);
}
