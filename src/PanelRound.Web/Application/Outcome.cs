namespace PanelRound.Web.Application;

/// <summary>What an application operation produced: a value, field-level errors, or a refusal.</summary>
public enum OutcomeKind
{
    Ok,
    Invalid,
    NotFound,
    Conflict,
}

/// <summary>
/// The result of an application operation, shared by the API (which maps it to ProblemDetails)
/// and the pages (which put the errors beside the fields). Expected failures are values here.
/// </summary>
public sealed record Outcome<T>(OutcomeKind Kind, T? Value, IReadOnlyDictionary<string, string[]> Errors, string? Message)
{
    public bool IsOk => Kind == OutcomeKind.Ok;

    public static Outcome<T> Ok(T value) => new(OutcomeKind.Ok, value, Empty, null);

    public static Outcome<T> Invalid(FieldErrors errors) => new(OutcomeKind.Invalid, default, errors.ToDictionary(), "The input has errors.");

    public static Outcome<T> NotFound(string message) => new(OutcomeKind.NotFound, default, Empty, message);

    public static Outcome<T> Conflict(string message) => new(OutcomeKind.Conflict, default, Empty, message);

    public Outcome<TOther> As<TOther>() => new(Kind, default, Errors, Message);

    private static readonly IReadOnlyDictionary<string, string[]> Empty = new Dictionary<string, string[]>();
}

/// <summary>Field-level validation errors, keyed by the input's field path (e.g. <c>answers[0].periods[2].value</c>).</summary>
public sealed class FieldErrors
{
    private readonly Dictionary<string, List<string>> _errors = new(StringComparer.Ordinal);

    public bool Any => _errors.Count > 0;

    public void Add(string field, string message)
    {
        if (!_errors.TryGetValue(field, out var list))
        {
            _errors[field] = list = [];
        }
        list.Add(message);
    }

    /// <summary>Adds an error when <paramref name="text"/> is empty or longer than <paramref name="max"/>.</summary>
    public string Required(string field, string? text, int max, string label)
    {
        if (string.IsNullOrWhiteSpace(text))
        {
            Add(field, $"{label} is required.");
            return "";
        }
        if (text.Trim().Length > max)
        {
            Add(field, $"{label} is at most {max} characters.");
        }
        return text.Trim();
    }

    public string? Optional(string field, string? text, int max, string label)
    {
        if (string.IsNullOrWhiteSpace(text))
        {
            return null;
        }
        if (text.Trim().Length > max)
        {
            Add(field, $"{label} is at most {max} characters.");
        }
        return text.Trim();
    }

    public void Finite(string field, double? value, string label)
    {
        if (value is { } v && !double.IsFinite(v))
        {
            Add(field, $"{label} must be a finite number.");
        }
    }

    public Dictionary<string, string[]> ToDictionary() => _errors.ToDictionary(e => e.Key, e => e.Value.ToArray(), StringComparer.Ordinal);
}
