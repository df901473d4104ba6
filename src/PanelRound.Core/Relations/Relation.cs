namespace PanelRound.Core.Relations;

/// <summary>The shape of an identity between three quantities.</summary>
public enum RelationKind
{
    /// <summary>result = first × second, e.g. income = value × yield.</summary>
    Product,

    /// <summary>result = first + second, e.g. price = land + construction cost.</summary>
    Sum,
}

/// <summary>A term of a relation: what it is, in which unit, and the factor that turns its unit into the relation's base unit.</summary>
/// <param name="Label">The term's name, e.g. "prime office rent".</param>
/// <param name="Unit">The unit as shown, e.g. <c>EUR/m²/year</c> or <c>%</c>.</param>
/// <param name="UnitFactor">Base value = shown value × factor; e.g. 0.01 for a yield in %, 1 for EUR/m². Finite and positive.</param>
public sealed record RelationTerm(string Label, string Unit, double UnitFactor)
{
    /// <summary>The shown value in base units.</summary>
    public double ToBase(double value) => value * UnitFactor;

    /// <summary>A base value in the term's unit.</summary>
    public double FromBase(double value) => value / UnitFactor;
}

/// <summary>Which term of a relation.</summary>
public enum RelationRole
{
    /// <summary>The left-hand side: income in income = value × yield.</summary>
    Result,

    /// <summary>The first right-hand term: value.</summary>
    First,

    /// <summary>The second right-hand term: yield.</summary>
    Second,
}

/// <summary>One value per term of a relation at one period; null where a term has no value.</summary>
public sealed record RelationValues(double? Result, double? First, double? Second)
{
    /// <summary>The value of a role.</summary>
    public double? Of(RelationRole role) => role switch
    {
        RelationRole.Result => Result,
        RelationRole.First => First,
        _ => Second,
    };
}

/// <summary>The check of one period: the result implied by the first and second terms against the result given.</summary>
/// <param name="Given">The result term's value, in its unit.</param>
/// <param name="Implied">The result implied by the first and second terms, in the result's unit.</param>
/// <param name="RelativeDifference">(given − implied) / |implied|.</param>
/// <param name="Flagged">True when |relative difference| exceeds the tolerance.</param>
public sealed record RelationCheck(double Given, double Implied, double RelativeDifference, bool Flagged);

/// <summary>
/// An identity between three quantities in stated units: result·f_R = (first·f_F) ∘ (second·f_S), with ∘
/// the product or the sum and f the unit factors (<see cref="RelationTerm.UnitFactor"/>).
/// </summary>
/// <remarks>
/// <para>Example: annual rent per m² (EUR/m²/year, factor 1) = capital value per m² (EUR/m², factor 1) ×
/// yield (%, factor 0.01). Income capitalisation (value = income / yield) is the identity valuers
/// use for investment property; the factors make the units explicit instead of hiding a "/100".</para>
/// <para>Implied values: any term follows from the other two (<see cref="Implied"/>). A product term cannot be
/// implied when the divisor is zero; the result is then null. The check compares the given result with the
/// result implied by the first and second terms, relative to the implied one; a unit change of any term
/// that is matched by its factor (value ÷ c, factor × c) changes no check, because everything is compared
/// in base units.</para>
/// </remarks>
public sealed record Relation
{
    public Relation(RelationKind kind, RelationTerm result, RelationTerm first, RelationTerm second)
    {
        Kind = kind;
        Result = Check(result, nameof(result));
        First = Check(first, nameof(first));
        Second = Check(second, nameof(second));
    }

    /// <summary>The shape.</summary>
    public RelationKind Kind { get; }

    /// <summary>The left-hand term.</summary>
    public RelationTerm Result { get; }

    /// <summary>The first right-hand term.</summary>
    public RelationTerm First { get; }

    /// <summary>The second right-hand term.</summary>
    public RelationTerm Second { get; }

    /// <summary>The term of a role.</summary>
    public RelationTerm Term(RelationRole role) => role switch
    {
        RelationRole.Result => Result,
        RelationRole.First => First,
        _ => Second,
    };

    /// <summary>
    /// The value of <paramref name="role"/> implied by the other two terms of <paramref name="values"/>, in the
    /// role's unit; null when one of the two is missing or the division is by zero.
    /// </summary>
    public double? Implied(RelationRole role, RelationValues values)
    {
        ArgumentNullException.ThrowIfNull(values);
        double? r = values.Result is { } rv ? Result.ToBase(Preconditions.CheckFinite(rv, nameof(values))) : null;
        double? f = values.First is { } fv ? First.ToBase(Preconditions.CheckFinite(fv, nameof(values))) : null;
        double? s = values.Second is { } sv ? Second.ToBase(Preconditions.CheckFinite(sv, nameof(values))) : null;
        double? baseValue = (role, Kind) switch
        {
            (RelationRole.Result, RelationKind.Product) => f * s,
            (RelationRole.Result, _) => f + s,
            (RelationRole.First, RelationKind.Product) => s is 0 ? null : r / s,
            (RelationRole.First, _) => r - s,
            (RelationRole.Second, RelationKind.Product) => f is 0 ? null : r / f,
            _ => r - f,
        };
        return baseValue is { } b && double.IsFinite(b) ? Term(role).FromBase(b) : null;
    }

    /// <summary>
    /// The given result against the result implied by the first and second terms; null when a value is
    /// missing or the implied result is zero (no relative difference).
    /// </summary>
    /// <param name="values">The three values at one period.</param>
    /// <param name="tolerance">The largest |relative difference| that is not flagged, in [0, 10].</param>
    public RelationCheck? Check(RelationValues values, double tolerance)
    {
        Preconditions.CheckInRange(tolerance, 0, 10);
        if (values?.Result is not { } given || Implied(RelationRole.Result, values) is not { } implied || implied == 0)
        {
            return null;
        }

        var difference = (Result.ToBase(given) - Result.ToBase(implied)) / Math.Abs(Result.ToBase(implied));
        return new RelationCheck(given, implied, difference, Math.Abs(difference) > tolerance);
    }

    private static RelationTerm Check(RelationTerm term, string name)
    {
        ArgumentNullException.ThrowIfNull(term, name);
        ArgumentNullException.ThrowIfNull(term.Label, name);
        ArgumentNullException.ThrowIfNull(term.Unit, name);
        if (!double.IsFinite(term.UnitFactor) || term.UnitFactor <= 0)
        {
            throw new ArgumentOutOfRangeException(name, term.UnitFactor, "A unit factor must be a finite positive number.");
        }

        return term;
    }
}
