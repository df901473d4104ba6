using Microsoft.AspNetCore.Http.HttpResults;

namespace PanelRound.Web.Infrastructure;

/// <summary>Maps operation results to typed results: ProblemDetails with field errors, 404 and 409.</summary>
public static class ApiResults
{
    public static Results<Ok<TOut>, ValidationProblem, ProblemHttpResult> ToOk<T, TOut>(this Result<T> o, Func<T, TOut> map) =>
        o.Kind switch
        {
            ResultKind.Ok => TypedResults.Ok(map(o.Value!)),
            ResultKind.Invalid => TypedResults.ValidationProblem(o.Errors, title: "The input has errors."),
            ResultKind.NotFound => NotFound(o.Message ?? "Not found."),
            _ => TypedResults.Problem(o.Message, statusCode: StatusCodes.Status409Conflict, title: "Conflict"),
        };

    public static Results<Created<TOut>, ValidationProblem, ProblemHttpResult> ToCreated<T, TOut>(
        this Result<T> o, Func<T, TOut> map, Func<T, string> location) =>
        o.Kind switch
        {
            ResultKind.Ok => TypedResults.Created(location(o.Value!), map(o.Value!)),
            ResultKind.Invalid => TypedResults.ValidationProblem(o.Errors, title: "The input has errors."),
            ResultKind.NotFound => NotFound(o.Message ?? "Not found."),
            _ => TypedResults.Problem(o.Message, statusCode: StatusCodes.Status409Conflict, title: "Conflict"),
        };

    /// <summary>A 404 as ProblemDetails (<c>application/problem+json</c>).</summary>
    public static ProblemHttpResult NotFound(string detail) => TypedResults.Problem(detail, statusCode: StatusCodes.Status404NotFound, title: "Not found");

    /// <summary>
    /// The public base URL for personal links: <c>App:PublicBaseUrl</c> when set (needed behind a
    /// proxy, and so that a forged Host header never reaches an invitation), else the request's.
    /// </summary>
    public static string BaseUrl(HttpRequest request) =>
        request.HttpContext.RequestServices.GetRequiredService<IConfiguration>()["App:PublicBaseUrl"] is { Length: > 0 } configured
            ? configured.TrimEnd('/')
            : $"{request.Scheme}://{request.Host}{request.PathBase}";
}
