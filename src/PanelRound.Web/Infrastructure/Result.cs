namespace PanelRound.Web.Infrastructure;

/// <summary>What an application operation produced: a value, field-level errors, or a refusal.</summary>
public enum ResultKind
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
public sealed record Result<T>(ResultKind Kind, T? Value, IReadOnlyDictionary<string, string[]> Errors, string? Message)
{
    public bool IsOk => Kind == ResultKind.Ok;

    public static Result<T> Ok(T value) => new(ResultKind.Ok, value, Empty, null);

    public static Result<T> Invalid(FieldErrors errors) => new(ResultKind.Invalid, default, errors.ToDictionary(), "The input has errors.");

    public static Result<T> NotFound(string message) => new(ResultKind.NotFound, default, Empty, message);

    public static Result<T> Conflict(string message) => new(ResultKind.Conflict, default, Empty, message);

    public Result<TOther> As<TOther>() => new(Kind, default, Errors, Message);

    private static readonly IReadOnlyDictionary<string, string[]> Empty = new Dictionary<string, string[]>();
}
