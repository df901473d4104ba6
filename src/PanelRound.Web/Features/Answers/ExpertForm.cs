using System.Globalization;
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

/// <summary>Whom the experts of a panel write to with questions; either part may be missing.</summary>
public sealed record PanelContact(string? Name, string? Email);

/// <summary>
/// The published consensus of one question-period as the expert sees it once the panel concluded,
/// beside the expert's own answer in the final round. <paramref name="Withheld"/>: fewer answers
/// than the panel's minimum group size, so no number is shown; <paramref name="BandWithheld"/>:
/// the band is shown by the rule of the group's spread (from
/// <see cref="Core.Statistics.AnonymousFeedback.MinimumForSpread"/> answers), since a band of
/// few answers can be solved for the individual answers.
/// </summary>
public sealed record ExpertConsensus(
    int QuestionId, string Period, int N, int MinimumGroupSize, bool Withheld, double? Value, bool BandWithheld, double? Low, double? High, AnswerValues? FinalAnswer);

/// <summary>
/// What an expert's personal link shows: their own membership only, and anonymous group feedback;
/// <c>AsOf</c> is the app's clock when the form was read (the time left in the round is measured
/// from it), <c>Contact</c> the panel's contact when the facilitator gave one, and once the panel
/// concluded <c>Consensus</c> its published consensus per question-period (in the questions'
/// order) from round <c>ConsensusRound</c>.
/// </summary>
public sealed record ExpertForm(
    int PanelId, int MembershipId, string PanelCode, string Title, string BriefHtml, PanelState PanelState,
    RoundInfo? Round, bool CanAnswer, string? ReadOnlyReason, int? FeedbackRound, bool OutliersMustJustify,
    DateTime? LastSubmittedAt, IReadOnlyList<ExpertQuestion> Questions,
    DateTime AsOf, PanelContact? Contact, int? ConsensusRound, IReadOnlyList<ExpertConsensus> Consensus);

/// <summary>How long is left until a deadline, in the words a reader takes in at a glance.</summary>
public static class TimeLeftText
{
    /// <summary>
    /// "11 days 23 hours", "5 hours 12 minutes", "40 minutes", "less than a minute"; the two
    /// largest units, always rounded down, so the time left is never overstated. Zero or less: "no time".
    /// </summary>
    public static string Describe(TimeSpan left)
    {
        if (left <= TimeSpan.Zero)
        {
            return "no time";
        }
        if (left < TimeSpan.FromMinutes(1))
        {
            return "less than a minute";
        }
        var (big, bigUnit, small, smallUnit) = left.TotalDays >= 1
            ? ((int)left.TotalDays, "day", left.Hours, "hour")
            : left.TotalHours >= 1
                ? ((int)left.TotalHours, "hour", left.Minutes, "minute")
                : ((int)left.TotalMinutes, "minute", 0, "");
        var text = Count(big, bigUnit);
        return small > 0 ? text + " " + Count(small, smallUnit) : text;
    }

    private static string Count(int n, string unit) => n.ToString(CultureInfo.InvariantCulture) + " " + unit + (n == 1 ? "" : "s");
}
