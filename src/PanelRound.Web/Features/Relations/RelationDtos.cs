using PanelRound.Core.Relations;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Relations;

/// <summary>A term as the API sends it: a question of the panel, or (for a derived term) a label; unit and unit factor.</summary>
/// <param name="QuestionId">A question of the panel; null for the term derived from the other two.</param>
/// <param name="Label">The term's name; by default the question's label.</param>
/// <param name="Unit">The unit; by default the question's indicator unit.</param>
/// <param name="Factor">Base value = value × factor (e.g. 0.01 for a yield in %); default 1.</param>
public sealed record RelationTermInput(int? QuestionId = null, string? Label = null, string? Unit = null, double? Factor = null);

/// <summary>A relation as the API sends it: result = first × second (<c>Product</c>) or result = first + second (<c>Sum</c>).</summary>
public sealed record RelationInput(string? Shape, RelationTermInput? Result, RelationTermInput? First, RelationTermInput? Second);

public sealed record RelationTermDto(string Role, int? QuestionId, string Label, string Unit, double Factor);

/// <summary>A declared relation; <c>formula</c> states it in words with the unit factors.</summary>
public sealed record RelationDto(int Id, int PanelId, string Shape, string Formula, RelationTermDto Result, RelationTermDto First, RelationTermDto Second)
{
    public static RelationDto From(QuestionRelation r) => new(r.Id, r.PanelId, r.Shape.ToString(), FormulaOf(r),
        new("result", r.ResultQuestionId, r.ResultLabel, r.ResultUnit, r.ResultFactor),
        new("first", r.FirstQuestionId, r.FirstLabel, r.FirstUnit, r.FirstFactor),
        new("second", r.SecondQuestionId, r.SecondLabel, r.SecondUnit, r.SecondFactor));

    public static string FormulaOf(QuestionRelation r) => FormattableString.Invariant(
        $"{Term(r.ResultLabel, r.ResultUnit, r.ResultFactor)} = {Term(r.FirstLabel, r.FirstUnit, r.FirstFactor)} {(r.Shape == RelationShape.Product ? "×" : "+")} {Term(r.SecondLabel, r.SecondUnit, r.SecondFactor)}");

    /// <summary>The core's relation of an entity.</summary>
    public static Relation ToCore(QuestionRelation r) => new(
        r.Shape == RelationShape.Product ? RelationKind.Product : RelationKind.Sum,
        new RelationTerm(r.ResultLabel, r.ResultUnit, r.ResultFactor),
        new RelationTerm(r.FirstLabel, r.FirstUnit, r.FirstFactor),
        new RelationTerm(r.SecondLabel, r.SecondUnit, r.SecondFactor));

    private static string Term(string label, string unit, double factor) =>
        factor == 1 ? FormattableString.Invariant($"{label} [{unit}]") : FormattableString.Invariant($"{factor:G6} × {label} [{unit}]");
}

/// <summary>One period of a relation check: the three values (null where missing), the implied result and the flag.</summary>
public sealed record RelationPeriodCheck(string Period, double? Result, double? First, double? Second, double? ImpliedResult, double? RelativeDifference, bool Flagged);

/// <summary>A derived term's path: the value implied by the other two at each period.</summary>
public sealed record DerivedPoint(string Period, double Value);

/// <summary>The check of one relation on the panel's consensus (published, else the last round's trimmed median).</summary>
/// <param name="Relation">The relation.</param>
/// <param name="Periods">Per period where all three values exist (a derived term takes its implied value and is never flagged).</param>
/// <param name="DerivedRole">The role without a question (<c>result</c>, <c>first</c> or <c>second</c>); null when all three are asked.</param>
/// <param name="Derived">The derived term's path.</param>
/// <param name="Tolerance">The panel's tolerance.</param>
public sealed record RelationConsensusCheck(RelationDto Relation, IReadOnlyList<RelationPeriodCheck> Periods, string? DerivedRole, IReadOnlyList<DerivedPoint> Derived, double Tolerance);

/// <summary>The check of one relation on one expert's own answers, by panel code (staff only).</summary>
public sealed record RelationCodeCheck(string PanelCode, IReadOnlyList<RelationPeriodCheck> Periods);

/// <summary>What an expert's own answers imply for a question of a relation, outside its plausible range (shown to that expert only).</summary>
public sealed record PrivateRelationNote(int QuestionId, string Question, string Period, double Implied, double? PlausibleMin, double? PlausibleMax, string Unit, string Text);
