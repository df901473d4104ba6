using System.Text.Json;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Diagnostics;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// Turns a request the API cannot read (JSON of the wrong shape or type, a missing body, a broken
/// multipart form) into a 400 ValidationProblem that names the field, in every environment.
/// </summary>
/// <remarks>
/// Implementation note: minimal APIs report binding failures either by throwing
/// <see cref="BadHttpRequestException"/> (<see cref="RouteHandlerOptions.ThrowOnBadRequest"/>, on
/// in Development only by default) or by answering a bare 400 without a body. The option is turned
/// on everywhere (<see cref="BadRequestSetup.AddBadRequestProblems"/>) so that every such failure reaches this
/// handler, which reads the field from the JSON path or the parameter's name.
/// </remarks>
public sealed partial class BadRequestProblems(IProblemDetailsService problems) : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        if (Describe(exception) is not { } described)
        {
            return false;
        }
        httpContext.Response.StatusCode = described.Status;
        var problem = new HttpValidationProblemDetails(described.Errors)
        {
            Status = described.Status,
            Title = described.Status == StatusCodes.Status400BadRequest ? "The input has errors." : "The request was refused.",
        };
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = httpContext, ProblemDetails = problem, Exception = exception });
    }

    /// <summary>The status and the field errors for an exception caused by an unreadable request, or null for any other exception.</summary>
    public static (int Status, Dictionary<string, string[]> Errors)? Describe(Exception exception)
    {
        switch (exception)
        {
            case BadHttpRequestException bad:
                var status = bad.StatusCode is >= 400 and < 500 ? bad.StatusCode : StatusCodes.Status400BadRequest;
                if (Find<JsonException>(bad) is { } json)
                {
                    var field = FieldOf(json.Path) ?? ParameterOf(bad.Message) ?? "body";
                    return (status, Errors(field, $"'{field}' is not valid here: expected a value of the documented type (numbers as JSON numbers with a point for decimals, e.g. 1.5; texts as JSON strings)."));
                }
                if (Find<InvalidDataException>(bad) is not null || Find<IOException>(bad) is not null)
                {
                    return (status, Errors(ParameterOf(bad.Message) ?? "body", "The multipart form could not be read: " + Innermost(bad).Message));
                }
                return (status, Errors(ParameterOf(bad.Message) ?? "body", bad.Message));
            case InvalidOperationException { InnerException: ArgumentException } charset
                when charset.StackTrace?.Contains("HttpRequestJsonExtensions", StringComparison.Ordinal) == true:
                // Thrown by the JSON body reader when the Content-Type names a charset .NET does not know.
                return (StatusCodes.Status415UnsupportedMediaType, Errors("Content-Type", "The charset of the request is not a known encoding; send JSON as UTF-8 (application/json; charset=utf-8)."));
            case InvalidDataException data:
                // Thrown by the multipart reader (ReadFormAsync) on a malformed body.
                return (StatusCodes.Status400BadRequest, Errors("body", "The multipart form could not be read: " + data.Message));
            case IOException io when io.StackTrace?.Contains("Microsoft.AspNetCore.WebUtilities", StringComparison.Ordinal) == true:
                return (StatusCodes.Status400BadRequest, Errors("body", "The request body ended early or could not be read: " + io.Message));
            default:
                return null;
        }
    }

    private static Dictionary<string, string[]> Errors(string field, string message) => new(StringComparer.Ordinal) { [field] = [message] };

    private static T? Find<T>(Exception e)
        where T : Exception
    {
        for (Exception? x = e; x is not null; x = x.InnerException)
        {
            if (x is T t)
            {
                return t;
            }
        }
        return null;
    }

    private static Exception Innermost(Exception e)
    {
        while (e.InnerException is not null)
        {
            e = e.InnerException;
        }
        return e;
    }

    /// <summary>"$.answers[0].periods[1].value" → "answers[0].periods[1].value"; "$[2].value" → "[2].value"; "$" → null.</summary>
    internal static string? FieldOf(string? jsonPath)
    {
        if (string.IsNullOrEmpty(jsonPath) || jsonPath == "$")
        {
            return null;
        }
        var field = jsonPath.StartsWith("$.", StringComparison.Ordinal) ? jsonPath[2..] : jsonPath.TrimStart('$');
        return field.Length == 0 ? null : field;
    }

    /// <summary>The parameter's name in the framework's messages, e.g. 'Failed to read parameter "SubmissionInput input"'.</summary>
    internal static string? ParameterOf(string message) => ParameterPattern().Match(message) is { Success: true } m ? m.Groups["name"].Value : null;

    [GeneratedRegex("parameter \"[^\"]*? (?<name>[A-Za-z_][A-Za-z0-9_]*)\"")]
    private static partial Regex ParameterPattern();
}

public static class BadRequestSetup
{
    /// <summary>Registers <see cref="BadRequestProblems"/> and makes minimal APIs report binding failures as exceptions in every environment.</summary>
    public static IServiceCollection AddBadRequestProblems(this IServiceCollection services)
    {
        services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        services.AddExceptionHandler<BadRequestProblems>();
        services.AddExceptionHandler<DatabaseBusyProblems>();
        return services;
    }
}
