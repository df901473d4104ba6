using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.Mvc;
using PanelRound.Web.Application;

namespace PanelRound.Web.Apis;

/// <summary>Maps application outcomes to typed results: ProblemDetails with field errors, 404 and 409.</summary>
public static class ApiResults
{
    public static Results<Ok<TOut>, ValidationProblem, NotFound<ProblemDetails>, Conflict<ProblemDetails>> ToOk<T, TOut>(this Outcome<T> o, Func<T, TOut> map) =>
        o.Kind switch
        {
            OutcomeKind.Ok => TypedResults.Ok(map(o.Value!)),
            OutcomeKind.Invalid => TypedResults.ValidationProblem(o.Errors, title: "The input has errors."),
            OutcomeKind.NotFound => TypedResults.NotFound(Problem(404, "Not found", o.Message)),
            _ => TypedResults.Conflict(Problem(409, "Conflict", o.Message)),
        };

    public static Results<Created<TOut>, ValidationProblem, NotFound<ProblemDetails>, Conflict<ProblemDetails>> ToCreated<T, TOut>(
        this Outcome<T> o, Func<T, TOut> map, Func<T, string> location) =>
        o.Kind switch
        {
            OutcomeKind.Ok => TypedResults.Created(location(o.Value!), map(o.Value!)),
            OutcomeKind.Invalid => TypedResults.ValidationProblem(o.Errors, title: "The input has errors."),
            OutcomeKind.NotFound => TypedResults.NotFound(Problem(404, "Not found", o.Message)),
            _ => TypedResults.Conflict(Problem(409, "Conflict", o.Message)),
        };

    public static ProblemDetails Problem(int status, string title, string? detail) => new() { Status = status, Title = title, Detail = detail };

    public static NotFound<ProblemDetails> NotFound(string detail) => TypedResults.NotFound(Problem(404, "Not found", detail));

    /// <summary>The public base URL for links: the request's scheme and host.</summary>
    public static string BaseUrl(HttpRequest request) => $"{request.Scheme}://{request.Host}{request.PathBase}";
}
