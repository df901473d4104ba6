using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Rounds;

namespace PanelRound.Web.Features.Answers;

public sealed record AnswerValues(double? Value, double? P10, double? P50, double? P90);

public sealed record RoundInfo(int Number, DateTime OpensAt, DateTime ClosesAt, bool IsOpen);

/// <summary>One target period of a question, as the expert sees it.</summary>
public sealed record ExpertPeriod(string Period, AnswerValues? Current, bool CurrentIsDraft, AnswerValues? Previous, GroupFeedback? Feedback);

public sealed record ExpertQuestion(
    int Id, string Label, string? HelpText, ResponseFormat Format, string Unit, int Decimals,
    double? HardMin, double? HardMax, double? PlausibleMin, double? PlausibleMax,
    IReadOnlyList<SeriesPoint> Reference, IReadOnlyList<ExpertPeriod> Periods, IReadOnlyList<string> Rationales,
    int? Confidence, string? Rationale);

/// <summary>What an expert's personal link shows: their own membership only, and anonymous group feedback.</summary>
public sealed record ExpertForm(
    int PanelId, int MembershipId, string PanelCode, string Title, string BriefHtml, PanelState PanelState,
    RoundInfo? Round, bool CanAnswer, string? ReadOnlyReason, int? FeedbackRound, bool OutliersMustJustify,
    DateTime? LastSubmittedAt, IReadOnlyList<ExpertQuestion> Questions);
