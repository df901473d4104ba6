using System.Runtime.CompilerServices;

namespace PanelRound.Core;

/// <summary>
/// Guards for programming errors: nulls, non-finite numbers and out-of-range arguments.
/// </summary>
/// <remarks>
/// Every check throws a member of the <see cref="ArgumentException"/> family and is meant for
/// arguments a correct caller never passes. Expected failures (too few answers, an invalid
/// expert answer) are modelled as results by the statistics API, not by these guards.
/// NaN is always rejected, including where a range check alone would let it through, because
/// every comparison with NaN is false.
/// </remarks>
public static class Preconditions
{
    /// <summary>Returns <paramref name="value"/>, or throws <see cref="ArgumentNullException"/> when it is null.</summary>
    public static T CheckNotNull<T>(T? value, [CallerArgumentExpression(nameof(value))] string? paramName = null)
        where T : class
    {
        ArgumentNullException.ThrowIfNull(value, paramName);
        return value;
    }

    /// <summary>Returns <paramref name="value"/>, or throws when it is NaN or an infinity.</summary>
    public static double CheckFinite(double value, [CallerArgumentExpression(nameof(value))] string? paramName = null)
    {
        if (!double.IsFinite(value))
        {
            throw new ArgumentOutOfRangeException(paramName, value, "The value must be a finite number (not NaN or an infinity).");
        }

        return value;
    }

    /// <summary>
    /// Returns <paramref name="value"/>, or throws when it is not finite or lies outside the
    /// closed interval [<paramref name="minInclusive"/>, <paramref name="maxInclusive"/>].
    /// </summary>
    public static double CheckInRange(
        double value,
        double minInclusive,
        double maxInclusive,
        [CallerArgumentExpression(nameof(value))] string? paramName = null)
    {
        if (!double.IsFinite(value) || value < minInclusive || value > maxInclusive)
        {
            throw new ArgumentOutOfRangeException(
                paramName, value, $"The value must be a finite number in [{minInclusive}, {maxInclusive}].");
        }

        return value;
    }

    /// <summary>
    /// Returns <paramref name="value"/>, or throws when it is not finite or lies outside the
    /// half-open interval [<paramref name="minInclusive"/>, <paramref name="maxExclusive"/>).
    /// </summary>
    public static double CheckInHalfOpenRange(
        double value,
        double minInclusive,
        double maxExclusive,
        [CallerArgumentExpression(nameof(value))] string? paramName = null)
    {
        if (!double.IsFinite(value) || value < minInclusive || value >= maxExclusive)
        {
            throw new ArgumentOutOfRangeException(
                paramName, value, $"The value must be a finite number in [{minInclusive}, {maxExclusive}).");
        }

        return value;
    }

    /// <summary>Returns <paramref name="value"/>, or throws when it lies outside [<paramref name="minInclusive"/>, <paramref name="maxInclusive"/>].</summary>
    public static int CheckInRange(
        int value,
        int minInclusive,
        int maxInclusive,
        [CallerArgumentExpression(nameof(value))] string? paramName = null)
    {
        if (value < minInclusive || value > maxInclusive)
        {
            throw new ArgumentOutOfRangeException(
                paramName, value, $"The value must be in [{minInclusive}, {maxInclusive}].");
        }

        return value;
    }

    /// <summary>Throws when <paramref name="values"/> is null or holds a NaN or an infinity.</summary>
    public static IReadOnlyList<double> CheckAllFinite(
        IReadOnlyList<double>? values,
        [CallerArgumentExpression(nameof(values))] string? paramName = null)
    {
        ArgumentNullException.ThrowIfNull(values, paramName);
        for (var i = 0; i < values.Count; i++)
        {
            if (!double.IsFinite(values[i]))
            {
                throw new ArgumentException(
                    $"Element {i} is {values[i]}; every value must be a finite number.", paramName);
            }
        }

        return values;
    }

    /// <summary>Throws when <paramref name="values"/> holds a NaN or an infinity.</summary>
    public static void CheckAllFinite(ReadOnlySpan<double> values, string paramName)
    {
        for (var i = 0; i < values.Length; i++)
        {
            if (!double.IsFinite(values[i]))
            {
                throw new ArgumentException(
                    $"Element {i} is {values[i]}; every value must be a finite number.", paramName);
            }
        }
    }

    /// <summary>
    /// Throws when <paramref name="values"/> holds a NaN, an infinity or a value beyond
    /// ±<see cref="Domain.Numbers.MaxMagnitude"/>: the domain in which the statistics cannot overflow.
    /// </summary>
    public static void CheckAllWithinMagnitude(ReadOnlySpan<double> values, string paramName)
    {
        CheckAllFinite(values, paramName);
        for (var i = 0; i < values.Length; i++)
        {
            if (!Domain.Numbers.InBounds(values[i]))
            {
                throw new ArgumentOutOfRangeException(
                    paramName, values[i], $"Element {i}: every value must be a finite number with magnitude at most {Domain.Numbers.MaxMagnitude:0e0}.");
            }
        }
    }

    /// <summary>Throws when <paramref name="values"/> is empty.</summary>
    public static void CheckNotEmpty<T>(
        IReadOnlyCollection<T> values,
        [CallerArgumentExpression(nameof(values))] string? paramName = null)
    {
        ArgumentNullException.ThrowIfNull(values, paramName);
        if (values.Count == 0)
        {
            throw new ArgumentException("At least one value is required.", paramName);
        }
    }

    /// <summary>
    /// Throws unless <paramref name="weights"/> has <paramref name="expectedCount"/> elements,
    /// each finite and non-negative, and at least one positive.
    /// </summary>
    public static IReadOnlyList<double> CheckWeights(
        IReadOnlyList<double>? weights,
        int expectedCount,
        [CallerArgumentExpression(nameof(weights))] string? paramName = null)
    {
        ArgumentNullException.ThrowIfNull(weights, paramName);
        if (weights.Count != expectedCount)
        {
            throw new ArgumentException(
                $"There are {weights.Count} weights for {expectedCount} values; they must match one to one.", paramName);
        }

        var anyPositive = false;
        for (var i = 0; i < weights.Count; i++)
        {
            var w = weights[i];
            if (!double.IsFinite(w) || w < 0)
            {
                throw new ArgumentException($"Weight {i} is {w}; weights must be finite and non-negative.", paramName);
            }

            anyPositive |= w > 0;
        }

        if (!anyPositive)
        {
            throw new ArgumentException("At least one weight must be positive.", paramName);
        }

        return weights;
    }
}
