using System.Net.Mime;
using Microsoft.AspNetCore.Diagnostics;
using Microsoft.AspNetCore.Mvc;
using Microsoft.Data.Sqlite;
using Npgsql;

namespace PanelRound.Web.Infrastructure;

/// <summary>
/// A database that did not answer in time (a command timeout, a lock or pool wait that ran out, a
/// server at its connection limit, SQLite's single writer still busy) answers 503 with
/// <c>Retry-After</c>, never 500: the transaction was rolled back, and a client that retries with
/// the same idempotency key cannot add a second revision.
/// </summary>
public sealed class DatabaseBusyProblems(IProblemDetailsService problems, ILogger<DatabaseBusyProblems> log) : IExceptionHandler
{
    /// <summary>The seconds a client is asked to wait.</summary>
    public const int RetryAfterSeconds = 5;

    private const string Detail = "The database did not answer in time, so the request may not have been saved. Send it again in a few seconds "
        + "(an expert submission with the same Idempotency-Key is never stored twice).";

    public async ValueTask<bool> TryHandleAsync(HttpContext httpContext, Exception exception, CancellationToken cancellationToken)
    {
        if (!IsBusy(exception) || httpContext.Response.HasStarted)
        {
            return false;
        }
        log.LogWarning(exception, "The database was busy; answered 503 to {Method} {Path}.", httpContext.Request.Method, httpContext.Request.Path);
        httpContext.Response.StatusCode = StatusCodes.Status503ServiceUnavailable;
        httpContext.Response.Headers.RetryAfter = RetryAfterSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture);
        if (!httpContext.Request.Path.StartsWithSegments("/api"))
        {
            httpContext.Response.ContentType = MediaTypeNames.Text.Plain + "; charset=utf-8";
            await httpContext.Response.WriteAsync("PanelRound is busy. " + Detail, cancellationToken);
            return true;
        }
        var problem = new ProblemDetails { Status = StatusCodes.Status503ServiceUnavailable, Title = "The service is busy.", Detail = Detail };
        return await problems.TryWriteAsync(new ProblemDetailsContext { HttpContext = httpContext, ProblemDetails = problem, Exception = exception });
    }

    /// <summary>Whether the exception, or one it wraps, says the database was busy rather than that the request or the code was wrong.</summary>
    public static bool IsBusy(Exception exception)
    {
        for (var e = exception; e is not null; e = e.InnerException)
        {
            switch (e)
            {
                case TimeoutException:
                // 55P03 lock not available, 57014 statement cancelled (timeout), 53300 too many connections, 40P01 deadlock.
                case PostgresException { SqlState: "55P03" or "57014" or "53300" or "40P01" }:
                // 5 SQLITE_BUSY, 6 SQLITE_LOCKED.
                case SqliteException { SqliteErrorCode: 5 or 6 }:
                    return true;
                case NpgsqlException { IsTransient: true } when e.InnerException is null or TimeoutException or System.Net.Sockets.SocketException:
                    return true;
            }
        }
        return false;
    }
}
