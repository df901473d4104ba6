using FsCheck;
using FsCheck.Xunit;
using PanelRound.Core.Relations;

namespace PanelRound.Core.Tests.Relations;

/// <summary>Identities between three questions, exact on constructed data, and the unit-change property.</summary>
public class RelationTests
{
    private static readonly Relation Income = new(RelationKind.Product,
        new RelationTerm("rent", "EUR/m²/year", 1), new RelationTerm("capital value", "EUR/m²", 1), new RelationTerm("yield", "%", 0.01));

    private static readonly Relation Price = new(RelationKind.Sum,
        new RelationTerm("price", "EUR/m²", 1), new RelationTerm("land", "EUR/m²", 1), new RelationTerm("construction", "EUR/m²", 1));

    [Fact]
    public void Implied_IncomeValueYield_WithPercentFactor_IsExact()
    {
        // Constructed: 5000 EUR/m² at 5.0% is 250 EUR/m²/year; each term follows from the other two.
        Assert.Equal(250, Income.Implied(RelationRole.Result, new(null, 5000, 5.0))!.Value, 12);
        Assert.Equal(5000, Income.Implied(RelationRole.First, new(250, null, 5.0))!.Value, 9);
        Assert.Equal(5.0, Income.Implied(RelationRole.Second, new(250, 5000, null))!.Value, 12);
    }

    [Fact]
    public void Implied_SameUnitsOtherFactors_GiveTheSameBaseValues()
    {
        // The yield as a fraction (factor 1) and the rent in thousands of EUR (factor 1000): the same identity.
        var thousands = new Relation(RelationKind.Product,
            new RelationTerm("rent", "kEUR/m²/year", 1000), new RelationTerm("capital value", "EUR/m²", 1), new RelationTerm("yield", "fraction", 1));
        Assert.Equal(0.25, thousands.Implied(RelationRole.Result, new(null, 5000, 0.05))!.Value, 12);
        Assert.Equal(0.05, thousands.Implied(RelationRole.Second, new(0.25, 5000, null))!.Value, 12);
    }

    [Fact]
    public void Implied_Sum_IsExact()
    {
        Assert.Equal(4200, Price.Implied(RelationRole.Result, new(null, 1500, 2700))!.Value);
        Assert.Equal(1500, Price.Implied(RelationRole.First, new(4200, null, 2700))!.Value);
        Assert.Equal(2700, Price.Implied(RelationRole.Second, new(4200, 1500, null))!.Value);
    }

    [Fact]
    public void Implied_DivisionByZeroOrMissingValue_IsNull()
    {
        Assert.Null(Income.Implied(RelationRole.Second, new(250, 0, null)));
        Assert.Null(Income.Implied(RelationRole.First, new(250, null, 0)));
        Assert.Null(Income.Implied(RelationRole.Result, new(null, 5000, null)));
    }

    [Theory]
    [InlineData(262.4, false)] // +4.96%: inside a 5% tolerance
    [InlineData(262.6, true)]  // +5.04%
    [InlineData(237.6, false)] // −4.96%
    [InlineData(237.4, true)]  // −5.04%
    public void Check_FlagsBeyondTheTolerance(double rent, bool flagged)
    {
        var check = Income.Check(new(rent, 5000, 5.0), 0.05)!;
        Assert.Equal(250, check.Implied, 12);
        Assert.Equal((rent - 250) / 250, check.RelativeDifference, 12);
        Assert.Equal(flagged, check.Flagged);
    }

    [Fact]
    public void Check_MissingValueOrZeroImplied_IsNull()
    {
        Assert.Null(Income.Check(new(null, 5000, 5.0), 0.05));
        Assert.Null(Income.Check(new(250, 5000, 0), 0.05));
    }

    [Fact]
    public void Relation_NonPositiveFactor_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new Relation(RelationKind.Sum,
            new RelationTerm("a", "", 1), new RelationTerm("b", "", 0), new RelationTerm("c", "", 1)));
    }

    /// <summary>
    /// Expressing any term in another unit (value ÷ c, factor × c) changes no flag. Cases within 1e-9 of the
    /// tolerance are left out: there the last bit of the arithmetic decides, not the units.
    /// </summary>
    [Property(MaxTest = 500)]
    public bool UnitChangeMatchedByFactor_ChangesNoFlag(
        PositiveInt rent, PositiveInt value, PositiveInt yieldBp, PositiveInt c1, PositiveInt c2, PositiveInt c3, bool sum)
    {
        var relation = sum ? Price : Income;
        var values = new RelationValues(rent.Get, value.Get, yieldBp.Get / 100.0);
        double s1 = c1.Get / 7.0, s2 = c2.Get / 3.0, s3 = c3.Get / 11.0;
        var scaled = new Relation(relation.Kind,
            relation.Result with { UnitFactor = relation.Result.UnitFactor * s1 },
            relation.First with { UnitFactor = relation.First.UnitFactor * s2 },
            relation.Second with { UnitFactor = relation.Second.UnitFactor * s3 });
        var scaledValues = new RelationValues(values.Result / s1, values.First / s2, values.Second / s3);
        const double tolerance = 0.05;
        var before = relation.Check(values, tolerance);
        var after = scaled.Check(scaledValues, tolerance);
        var nearEdge = before is not null && Math.Abs(Math.Abs(before.RelativeDifference) - tolerance) < 1e-9;
        return nearEdge
            || (before?.Flagged == after?.Flagged && (before is null || Math.Abs(before.RelativeDifference - after!.RelativeDifference) < 1e-9));
    }
}
