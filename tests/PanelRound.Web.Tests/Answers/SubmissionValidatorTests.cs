using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Answers;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// The rules of an expert's submission without a database (no published source except where
/// named: the rules are the product's own, documented on <see cref="SubmissionValidator"/>).
/// </summary>
public class SubmissionValidatorTests
{
    private static readonly IReadOnlyDictionary<(int, string), AnonymousSpread?> NoFeedback = new Dictionary<(int, string), AnonymousSpread?>();

    private static readonly Question Price = new()
    {
        Id = 1, Label = "Price", Format = ResponseFormat.Point, TargetPeriods = "2027,2028",
        HardMin = 0, HardMax = 100, PlausibleMin = 10, PlausibleMax = 50, Indicator = new Indicator { UnitLabel = "EUR/m²" },
    };

    private static readonly Question Rent = new()
    {
        Id = 2, Label = "Rent", Format = ResponseFormat.Range, TargetPeriods = "2027", Indicator = new Indicator { UnitLabel = "EUR/m²" },
    };

    private static readonly Question[] Questions = [Price, Rent];

    private static QuestionAnswerInput PriceAnswer(double? y2027, double? y2028, string? rationale = null) =>
        new(Price.Id, 3, rationale, [new PeriodAnswerInput("2027", y2027, P10: 1), new PeriodAnswerInput("2028", y2028)]);

    private static QuestionAnswerInput RentAnswer(double? p10, double? p50, double? p90) =>
        new(Rent.Id, null, null, [new PeriodAnswerInput("2027", 99, p10, p50, p90)]);

    private static SubmissionCheck Check(bool draft, params QuestionAnswerInput[] answers) =>
        SubmissionValidator.Validate(Questions, new SubmissionInput(draft, answers), NoFeedback);

    [Fact]
    public void Validate_CompleteSubmission_AnswersKeepOnlyTheirFormatsValues()
    {
        var check = Check(false, PriceAnswer(20, 30), RentAnswer(8, 9, 11));
        Assert.False(check.Errors.Any, string.Join("; ", check.Errors.ToDictionary().SelectMany(e => e.Value)));
        Assert.Equal(3, check.Answers.Count);
        Assert.Equal(new ValidatedAnswer(1, "2027", 20, null, null, null, 3, null), check.Answers[0]);
        Assert.Equal(new ValidatedAnswer(2, "2027", null, 8, 9, 11, null, null), check.Answers[2]);
        Assert.Empty(check.Warnings);
    }

    [Fact]
    public void Validate_BeyondHardBound_ErrorBesideTheValue()
    {
        var errors = Check(false, PriceAnswer(120, 30), RentAnswer(8, 9, 11)).Errors.ToDictionary();
        Assert.Equal("2027: above the highest allowed value, 100 EUR/m².", Assert.Single(errors["answers[0].periods[0].value"]));
    }

    [Fact]
    public void Validate_OutsidePlausibleRange_WarningOnly()
    {
        var check = Check(false, PriceAnswer(60, 30), RentAnswer(8, 9, 11));
        Assert.False(check.Errors.Any);
        Assert.Contains("60 EUR/m² is outside the plausible range 10 to 50", Assert.Single(check.Warnings), StringComparison.Ordinal);
    }

    [Fact]
    public void Validate_RangeOutOfOrder_ErrorOnTheQuantile()
    {
        var errors = Check(false, PriceAnswer(20, 30), RentAnswer(10, 9, 11)).Errors.ToDictionary();
        Assert.Equal("2027: P10 (10) must not be above P50 (9).", Assert.Single(errors["answers[1].periods[0].p10"]));
    }

    [Fact]
    public void Validate_IncompleteSubmission_RefusedButAcceptedAsDraft()
    {
        var submitted = Check(false, PriceAnswer(20, null)).Errors.ToDictionary();
        Assert.Equal("2028: a value is required.", Assert.Single(submitted["answers[0].periods[1].value"]));
        Assert.Equal("\"Rent\" is not answered.", Assert.Single(submitted["answers"]));

        var draft = Check(true, PriceAnswer(20, null));
        Assert.False(draft.Errors.Any);
        Assert.Single(draft.Answers);
    }

    [Fact]
    public void Validate_QuestionTwiceOrUnknown_ErrorOnTheQuestionId()
    {
        var errors = Check(true, PriceAnswer(20, 30), PriceAnswer(21, 31)).Errors.ToDictionary();
        Assert.Equal("Question 1 is answered twice.", Assert.Single(errors["answers[1].questionId"]));
        var unknown = Check(true, new QuestionAnswerInput(7, null, null, [])).Errors.ToDictionary();
        Assert.Equal("Question 7 is not on this panel.", Assert.Single(unknown["answers[0].questionId"]));
    }

    [Fact]
    public void Validate_RationaleLongerThanTheLimit_Refused()
    {
        var errors = Check(true, PriceAnswer(20, 30, new string('r', 2001))).Errors.ToDictionary();
        Assert.Equal("Rationale is at most 2000 characters.", Assert.Single(errors["answers[0].rationale"]));
    }

    /// <summary>
    /// The usual range is Tukey's fences on the quartiles the group was shown, Q1 − 1.5·IQR to
    /// Q3 + 1.5·IQR (J. W. Tukey, Exploratory Data Analysis, 1977): with Q1 = 30 and Q3 = 40, 15 to 55.
    /// </summary>
    [Theory]
    [InlineData(55, null, false)]
    [InlineData(15, null, false)]
    [InlineData(56, null, true)]
    [InlineData(14, null, true)]
    [InlineData(56, "The new towers change the market.", false)]
    public void Validate_AnswerOutsideTheShownFences_NeedsARationale(double value, string? rationale, bool refused)
    {
        var spread = new AnonymousSpread(30, 40, 0.3, new AnonymousHistogram([], [6]), null, null);
        var feedback = new Dictionary<(int, string), AnonymousSpread?> { [(Price.Id, "2027")] = spread };
        var check = SubmissionValidator.Validate(Questions, new SubmissionInput(false, [PriceAnswer(value, 30, rationale), RentAnswer(8, 9, 11)]), feedback);
        Assert.Equal(refused, check.Errors.ToDictionary().ContainsKey("answers[0].rationale"));
    }
}
