using PanelRound.Core.Domain;

namespace PanelRound.Core.Tests;

/// <summary>Which answers count in a round (no published source: the rule is the product's own, documented on <see cref="AnswerCounting"/>).</summary>
public class AnswerCountingTests
{
    private static readonly DateTime Closed = new(2027, 3, 31, 17, 0, 0, DateTimeKind.Utc);

    [Fact]
    public void AnswersCount_MembershipNotRevoked_Counts()
    {
        Assert.True(AnswerCounting.AnswersCount(false, null, Closed));
        Assert.True(AnswerCounting.AnswersCount(false, null, null));
    }

    [Theory]
    [InlineData(-1, false)]   // revoked before the round closed
    [InlineData(0, false)]    // revoked at the moment it closed: not after it
    [InlineData(1, true)]     // revoked after it closed: the closed round keeps the answers
    public void AnswersCount_RevokedAroundTheClose_CountsOnlyWhenRevokedAfterIt(int minutesAfterClose, bool counts) =>
        Assert.Equal(counts, AnswerCounting.AnswersCount(true, Closed.AddMinutes(minutesAfterClose), Closed));

    [Fact]
    public void AnswersCount_RevokedWhileTheRoundIsOpen_DoesNotCount() =>
        Assert.False(AnswerCounting.AnswersCount(true, Closed, null));

    [Fact]
    public void LatestRevisions_SeveralRevisionsInAnyOrder_TheHighestIdOfEachKeyCounts()
    {
        var answers = new[]
        {
            (Id: 7L, Member: 1, Period: "2027", Value: 3.0),
            (Id: 2L, Member: 1, Period: "2027", Value: 1.0),
            (Id: 5L, Member: 2, Period: "2027", Value: 9.0),
            (Id: 4L, Member: 1, Period: "2028", Value: 4.0),
            (Id: 9L, Member: 2, Period: "2027", Value: 8.0),
        };
        var counted = AnswerCounting.LatestRevisions(answers, a => (a.Member, a.Period), a => a.Id).OrderBy(a => a.Id).ToList();
        Assert.Equal([4L, 7L, 9L], counted.Select(a => a.Id));
        Assert.Equal([4.0, 3.0, 8.0], counted.Select(a => a.Value));
    }

    [Fact]
    public void LatestRevisions_NoAnswers_Empty() =>
        Assert.Empty(AnswerCounting.LatestRevisions(Array.Empty<(long Id, int Member)>(), a => a.Member, a => a.Id));
}
