namespace PanelRound.Data.Entities;

/// <summary>
/// Three terms of a panel tied by an identity, result = first × second or result = first + second, each
/// term in its unit with a factor to the relation's base unit. A term is a question of the panel or, when
/// only two of the three are asked, a label and unit whose path is derived from the other two.
/// </summary>
public class QuestionRelation
{
    public int Id { get; set; }

    public int PanelId { get; set; }

    public RelationShape Shape { get; set; }

    public int? ResultQuestionId { get; set; }

    public string ResultLabel { get; set; } = "";

    public string ResultUnit { get; set; } = "";

    public double ResultFactor { get; set; } = 1;

    public int? FirstQuestionId { get; set; }

    public string FirstLabel { get; set; } = "";

    public string FirstUnit { get; set; } = "";

    public double FirstFactor { get; set; } = 1;

    public int? SecondQuestionId { get; set; }

    public string SecondLabel { get; set; } = "";

    public string SecondUnit { get; set; } = "";

    public double SecondFactor { get; set; } = 1;

    public DateTime CreatedAt { get; set; }
}
