namespace PanelRound.Core.Statistics;

/// <summary>
/// One expert's range answer: the 10th, 50th and 90th percentiles of their belief, with
/// P10 ≤ P50 ≤ P90, all finite.
/// </summary>
/// <remarks>
/// The invariant is enforced on construction, so an instance is always valid. Use
/// <see cref="TryCreate"/> to check user input without exceptions; the constructor throws
/// <see cref="ArgumentException"/> for programming errors. Equal quantiles are allowed (a point
/// answer given as a range).
/// </remarks>
public sealed record RangeAnswer
{
    /// <summary>Creates a range answer; throws <see cref="ArgumentException"/> when invalid (see <see cref="TryCreate"/>).</summary>
    public RangeAnswer(double p10, double p50, double p90)
    {
        var problem = Validate(p10, p50, p90);
        if (problem is not null)
        {
            throw new ArgumentException(problem.Value.Message, ParameterName(problem.Value.Field));
        }

        P10 = p10;
        P50 = p50;
        P90 = p90;
    }

    /// <summary>The low estimate (10th percentile).</summary>
    public double P10 { get; }

    /// <summary>The central estimate (50th percentile).</summary>
    public double P50 { get; }

    /// <summary>The high estimate (90th percentile).</summary>
    public double P90 { get; }

    /// <summary>
    /// Checks user input and returns either a valid answer or the first problem, naming the field
    /// (<c>"P10"</c>, <c>"P50"</c> or <c>"P90"</c>).
    /// </summary>
    /// <remarks>
    /// Checked in this order: each value is finite (P10, then P50, then P90); P10 ≤ P50 (reported
    /// on P10); P50 ≤ P90 (reported on P90).
    /// </remarks>
    public static RangeAnswerResult TryCreate(double p10, double p50, double p90)
    {
        var problem = Validate(p10, p50, p90);
        return problem is { } p
            ? RangeAnswerResult.Invalid(p.Field, p.Message)
            : RangeAnswerResult.Valid(new RangeAnswer(p10, p50, p90));
    }

    /// <summary>Deconstructs into the three quantiles.</summary>
    public void Deconstruct(out double p10, out double p50, out double p90)
    {
        p10 = P10;
        p50 = P50;
        p90 = P90;
    }

    private static string ParameterName(string field) => field switch
    {
        nameof(P10) => "p10",
        nameof(P50) => "p50",
        _ => "p90",
    };

    private static (string Field, string Message)? Validate(double p10, double p50, double p90)
    {
        if (!double.IsFinite(p10))
        {
            return (nameof(P10), "P10 must be a finite number.");
        }

        if (!double.IsFinite(p50))
        {
            return (nameof(P50), "P50 must be a finite number.");
        }

        if (!double.IsFinite(p90))
        {
            return (nameof(P90), "P90 must be a finite number.");
        }

        if (p10 > p50)
        {
            return (nameof(P10), "P10 must not be greater than P50.");
        }

        if (p50 > p90)
        {
            return (nameof(P90), "P90 must not be less than P50.");
        }

        return null;
    }
}

/// <summary>The result of <see cref="RangeAnswer.TryCreate"/>: a valid answer, or the field at fault and why.</summary>
public sealed record RangeAnswerResult
{
    private RangeAnswerResult(RangeAnswer? answer, string? field, string? error)
    {
        Answer = answer;
        Field = field;
        Error = error;
    }

    /// <summary>True when the input formed a valid answer.</summary>
    [System.Diagnostics.CodeAnalysis.MemberNotNullWhen(true, nameof(Answer))]
    [System.Diagnostics.CodeAnalysis.MemberNotNullWhen(false, nameof(Field), nameof(Error))]
    public bool IsValid => Answer is not null;

    /// <summary>The answer, when valid.</summary>
    public RangeAnswer? Answer { get; }

    /// <summary>The offending field, <c>"P10"</c>, <c>"P50"</c> or <c>"P90"</c>, when invalid.</summary>
    public string? Field { get; }

    /// <summary>A short English explanation, when invalid.</summary>
    public string? Error { get; }

    internal static RangeAnswerResult Valid(RangeAnswer answer) => new(answer, null, null);

    internal static RangeAnswerResult Invalid(string field, string error) => new(null, field, error);
}
