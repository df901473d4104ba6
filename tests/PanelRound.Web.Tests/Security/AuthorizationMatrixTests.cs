using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;
using Access = PanelRound.Web.Tests.Defects.PageAuthorizationTests.Access;
using Answer = PanelRound.Web.Tests.Defects.PageAuthorizationTests.Answer;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// Every API endpoint (from the app's <see cref="EndpointDataSource"/>) and every page handler
/// (<see cref="PageAuthorizationTests.DiscoverAsync"/>), called by everyone who could call it:
/// nobody, an expert of panel A, an expert of panel B, the staff roles by cookie and by API key.
/// The expected access of each is a table in the test; an endpoint or handler missing from it
/// fails the test, so a new one cannot be forgotten. Experts reach only their own panel and
/// membership; a refused call changes no row.
/// </summary>
public abstract partial class AuthorizationMatrixTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>Who may call an API endpoint (the page handlers' table is <see cref="PageAuthorizationTests.Expected"/>).</summary>
    private static readonly IReadOnlyDictionary<string, Access> ExpectedApi = new Dictionary<string, Access>
    {
        ["GET /health/live"] = Access.Public,
        ["GET /health/ready"] = Access.Public,
        ["GET /openapi/{documentName}.json"] = Access.Public,

        ["GET /api/me"] = Access.Staff,
        ["GET /api/audit"] = Access.Administrator,

        ["GET /api/indicators"] = Access.Staff,
        ["POST /api/indicators"] = Access.Facilitator,
        ["GET /api/indicators/{id:int}/observations"] = Access.Staff,
        ["POST /api/indicators/{id:int}/observations"] = Access.Facilitator,
        ["POST /api/indicators/{id:int}/observations/csv"] = Access.Facilitator,

        ["GET /api/experts"] = Access.Facilitator,
        ["POST /api/experts"] = Access.Facilitator,
        ["GET /api/panels/{id:int}/members"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/members"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/members/{membershipId:int}/reissue"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/members/{membershipId:int}/revoke"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/reminders"] = Access.Facilitator,

        ["GET /api/panels"] = Access.Staff,
        ["GET /api/panels/{id:int}"] = Access.Staff,
        ["POST /api/panels"] = Access.Facilitator,
        ["PUT /api/panels/{id:int}"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/questions"] = Access.Facilitator,
        ["PUT /api/panels/{id:int}/questions/{questionId:int}"] = Access.Facilitator,
        ["DELETE /api/panels/{id:int}/questions/{questionId:int}"] = Access.Facilitator,

        ["GET /api/panels/{id:int}/rounds/{number:int}/feedback"] = Access.Staff,
        ["POST /api/panels/{id:int}/rounds"] = Access.Facilitator,
        ["POST /api/panels/{id:int}/rounds/{number:int}/close"] = Access.Facilitator,
        ["GET /api/panels/{id:int}/rounds/{number:int}/tracker"] = Access.Facilitator,

        ["GET /api/panels/{id:int}/results"] = Access.Staff,
        ["GET /api/panels/{id:int}/benchmarks"] = Access.Staff,
        ["GET /api/panels/{id:int}/relations"] = Access.Staff,
        ["GET /api/panels/{id:int}/relations/check"] = Access.Staff,
        ["POST /api/panels/{id:int}/relations"] = Access.Facilitator,
        ["DELETE /api/panels/{id:int}/relations/{relationId:int}"] = Access.Facilitator,
        ["GET /api/panels/{id:int}/calibration"] = Access.Staff,
        ["GET /api/panels/{id:int}/calibration/cross-validation"] = Access.Staff,
        ["PUT /api/panels/{id:int}/questions/{questionId:int}/true-value"] = Access.Facilitator,
        ["GET /api/panels/{id:int}/consensus"] = Access.Staff,
        ["POST /api/panels/{id:int}/conclude"] = Access.Facilitator,
        ["GET /api/panels/{id:int}/consensus/compare"] = Access.Staff,
        ["GET /api/panels/{id:int}/consensus.csv"] = Access.Staff,
        ["GET /api/panels/{id:int}/consensus.xlsx"] = Access.Staff,
        ["GET /api/panels/{id:int}/report.pdf"] = Access.Staff,

        ["POST /api/outcomes"] = Access.Reviewer,
        ["POST /api/outcomes/csv"] = Access.Reviewer,

        ["GET /api/scorecard"] = Access.Staff,
        ["GET /api/scorecard/backtest"] = Access.Staff,
        ["GET /api/scorecard/experts.csv"] = Access.Staff,
        ["GET /api/scorecard/report.pdf"] = Access.Staff,

        ["POST /api/imports/past-panels"] = Access.Facilitator,

        // The expert's API: the personal link's token (header) or cookie, own panel and membership only.
        ["GET /api/expert/memberships/{membershipId:int}"] = Access.ExpertLink,
        ["GET /api/expert/panels/{panelId:int}"] = Access.ExpertLink,
        ["POST /api/expert/panels/{panelId:int}/estimates"] = Access.ExpertLink,
    };

    /// <summary>A caller of the matrix: nobody, an expert (of panel A or B) or a staff role by cookie or by API key.</summary>
    private sealed record Caller(string Name, string? Role, bool IsExpert, HttpClient Api, HttpClient Pages, int ExpertPanel = 0, int Membership = 0, string? Token = null);

    /// <summary>An API endpoint found in the endpoint data source.</summary>
    private sealed record ApiEndpoint(string Method, string Route, bool TakesForm)
    {
        public string Key => $"{Method} {Route}";
    }

    [SkippableFact]
    public async Task EveryEndpointAndPageHandler_EveryCaller_AnswersAsTheTableSays()
    {
        var app = await StartAsync();
        var seed = await PageAuthorizationTests.SeedAsync(app);
        var panelA = await SmallPanel.CreateAsync(app, 3);
        var panelB = await SmallPanel.CreateAsync(app, 3);
        var endpoints = Discover(app.Services);
        // Signing out ends a cookie caller's session: those handlers come last.
        var handlers = (await PageAuthorizationTests.DiscoverAsync(app.Services)).OrderBy(h => h.Page == "/Account/Logout").ToList();

        // Both tables name exactly what the app serves: a new endpoint or handler fails here until it is added.
        var missing = endpoints.Select(e => e.Key).Except(ExpectedApi.Keys).Concat(handlers.Select(h => h.Key).Except(PageAuthorizationTests.Expected.Keys)).ToList();
        var stale = ExpectedApi.Keys.Except(endpoints.Select(e => e.Key)).Concat(PageAuthorizationTests.Expected.Keys.Except(handlers.Select(h => h.Key))).ToList();
        Assert.True(missing.Count == 0 && stale.Count == 0, $"Not in the expected table: {string.Join("; ", missing)}. In the table but not served: {string.Join("; ", stale)}.");

        // Callers that may do least go first, so that what an allowed caller changes cannot hide a refused write.
        var callers = new List<Caller>
        {
            new("anonymous", null, false, app.Client(), app.Client()),
            await ExpertAsync(app, "expert of panel A", panelA),
            await ExpertAsync(app, "expert of panel B", panelB),
        };
        foreach (var role in new[] { Roles.Reviewer, Roles.Facilitator, Roles.Administrator })
        {
            var key = await app.StaffClientAsync(role);
            callers.Add(new($"{role} API key", role, false, key, key));
            var cookie = await StaffCookieClient.SignedInAsync(app, role);
            // The app's own scripts send this header with cookie-borne API writes (CookieApiGuard).
            cookie.DefaultRequestHeaders.Add(CookieApiGuard.Header, "XMLHttpRequest");
            callers.Add(new($"{role} cookie", role, false, cookie, cookie));
        }

        var tables = await SecurityKit.TablesAsync(app);
        var failures = new List<string>();
        var cells = 0;
        foreach (var caller in callers)
        {
            foreach (var e in endpoints)
            {
                var access = ExpectedApi[e.Key];
                foreach (var (url, own) in ApiUrls(e, caller, seed, panelA, panelB))
                {
                    var expected = ExpectedApiStatus(access, caller, own);
                    var before = expected == Expect.Allowed ? null : await SecurityKit.RowCountsAsync(app, tables);
                    using var response = await caller.Api.SendAsync(ApiRequest(e, url));
                    cells++;
                    var status = (int)response.StatusCode;
                    var ok = expected switch
                    {
                        Expect.Allowed => status is not (401 or 403) && status < 500 && !(caller.IsExpert && status == 404),
                        Expect.Unauthorized => status == 401,
                        Expect.Forbidden => status == 403,
                        _ => status == 404,
                    };
                    if (!ok)
                    {
                        failures.Add($"{e.Method} {url} as {caller.Name}: expected {expected}, got {status} {Shorten(await response.Content.ReadAsStringAsync())}");
                    }
                    if (before is not null && await SecurityKit.RowCountsAsync(app, tables) is var after && after != before)
                    {
                        failures.Add($"{e.Method} {url} as {caller.Name}: refused, yet the data changed: {before} -> {after}");
                    }
                }
            }
            foreach (var h in handlers)
            {
                foreach (var (url, expected) in PageCells(h, caller, seed))
                {
                    var before = expected == Answer.Allowed ? null : await SecurityKit.RowCountsAsync(app, tables);
                    using var response = h.Method == "GET"
                        ? await caller.Pages.GetAsync(url)
                        : await caller.Pages.PostFormAsync(url, await FormTokenAsync(caller, h), PageAuthorizationTests.FormFor(h, seed));
                    cells++;
                    var answer = PageAuthorizationTests.Classify(response);
                    if (answer != expected || (int)response.StatusCode >= 500)
                    {
                        failures.Add($"{h.Key} {url} as {caller.Name}: expected {expected}, got {answer} ({(int)response.StatusCode} {response.Headers.Location})");
                    }
                    else if (expected == Answer.Allowed && response.StatusCode == HttpStatusCode.BadRequest)
                    {
                        failures.Add($"{h.Key} as {caller.Name}: 400, the call did not reach the page");
                    }
                    if (before is not null && await SecurityKit.RowCountsAsync(app, tables) is var after && after != before)
                    {
                        failures.Add($"{h.Key} as {caller.Name}: refused, yet the data changed: {before} -> {after}");
                    }
                }
            }
        }
        Console.WriteLine($"Authorisation matrix ({Provider}): {endpoints.Count} API endpoints and {handlers.Count} page handlers x {callers.Count} callers = {cells} cells.");
        Assert.True(failures.Count == 0, $"{failures.Count} of {cells} cells went wrong:\n" + string.Join('\n', failures));
    }

    private enum Expect
    {
        Allowed,
        Unauthorized,
        Forbidden,
        NotFound,
    }

    private static Expect ExpectedApiStatus(Access access, Caller caller, bool own) => access switch
    {
        Access.Public => Expect.Allowed,
        // No staff credential: an anonymous call or an expert's link answers 401, never 400.
        Access.ExpertLink when !caller.IsExpert => Expect.Unauthorized,
        Access.ExpertLink => own ? Expect.Allowed : Expect.NotFound,
        _ when caller.Role is null => Expect.Unauthorized,
        _ => PageAuthorizationTests.Admits(access).Contains(caller.Role) ? Expect.Allowed : Expect.Forbidden,
    };

    /// <summary>
    /// The URLs a caller tries: staff routes point at the seeded draft panel; an expert tries the
    /// expert routes with their own panel and membership and with the other panel's and another
    /// member's ids (which must answer 404).
    /// </summary>
    private static IEnumerable<(string Url, bool Own)> ApiUrls(ApiEndpoint e, Caller caller, PageAuthorizationTests.Seed seed, SmallPanel a, SmallPanel b)
    {
        string Fill(int panel, int membership) => RouteParameter().Replace(e.Route, m => m.Groups[1].Value switch
        {
            "id" or "panelId" => panel.Invariant(),
            "membershipId" => membership.Invariant(),
            "questionId" => seed.QuestionId.Invariant(),
            "number" => "1",
            "relationId" => seed.RelationId.Invariant(),
            "documentName" => "v1",
            var other => throw new InvalidOperationException($"{e.Key}: no test value for {other}."),
        });
        if (!e.Route.StartsWith("/api/expert/", StringComparison.Ordinal))
        {
            yield return (Fill(seed.PanelId, seed.MembershipId), true);
            yield break;
        }
        if (!caller.IsExpert)
        {
            yield return (Fill(a.PanelId, a.Members[0].MembershipId), false);
            yield break;
        }
        var mine = caller.ExpertPanel == a.PanelId ? a : b;
        var theirs = mine == a ? b : a;
        yield return (Fill(mine.PanelId, caller.Membership), true);
        yield return (Fill(theirs.PanelId, theirs.Members[0].MembershipId), false);
        if (e.Route.Contains("{membershipId", StringComparison.Ordinal))
        {
            // Another member of the expert's own panel.
            yield return (Fill(mine.PanelId, mine.Members[1].MembershipId), false);
        }
    }

    /// <summary>
    /// The request: writes carry an empty JSON object (an empty CSV file where the endpoint takes a
    /// form), so an allowed call is refused by validation at worst and a refused one would have reached it.
    /// </summary>
    private static HttpRequestMessage ApiRequest(ApiEndpoint e, string url)
    {
        var request = new HttpRequestMessage(new HttpMethod(e.Method), url);
        if (e.TakesForm)
        {
            request.Content = new MultipartFormDataContent { { new ByteArrayContent([]), "file", "empty.csv" } };
        }
        else if (e.Method is "POST" or "PUT")
        {
            request.Content = new StringContent("{}", Encoding.UTF8, "application/json");
        }
        return request;
    }

    /// <summary>
    /// A page handler's cells for a caller, with the answer the table implies. The link page is also
    /// tried with the expert's own token (it signs the expert in) besides a bogus one.
    /// </summary>
    private static IEnumerable<(string Url, Answer Expected)> PageCells(PageAuthorizationTests.PageHandler h, Caller caller, PageAuthorizationTests.Seed seed)
    {
        var access = PageAuthorizationTests.Expected[h.Key];
        var url = PageAuthorizationTests.Url(h, seed);
        if (h.Page == "/Answer/Link")
        {
            yield return (url, Answer.LinkNeeded);
            if (caller.Token is { } token)
            {
                yield return ($"/e/{token}", Answer.Allowed);
            }
            yield break;
        }
        yield return (url, access switch
        {
            Access.Public => Answer.Allowed,
            Access.ExpertLink => caller.IsExpert ? Answer.Allowed : Answer.LinkNeeded,
            _ when caller.Role is null => Answer.SignInRequired,
            _ => PageAuthorizationTests.Admits(access).Contains(caller.Role) ? Answer.Allowed : Answer.AccessDenied,
        });
    }

    /// <summary>
    /// An antiforgery token for the caller's form, from a page the caller may open where the page
    /// knows the caller as the handler will: an API key is a staff credential only on staff pages,
    /// so on the public and expert pages its caller is anonymous.
    /// </summary>
    private static Task<string> FormTokenAsync(Caller caller, PageAuthorizationTests.PageHandler h)
    {
        var staffPage = PageAuthorizationTests.Expected[h.Key] is not (Access.Public or Access.ExpertLink);
        var anonymousThere = caller.Role is null || (caller.Pages.DefaultRequestHeaders.Authorization is not null && !staffPage);
        return StaffCookieClient.TokenFromAsync(caller.Pages, caller.IsExpert ? "/expert" : anonymousThere ? "/Account/Login" : "/Staff/Panels");
    }

    /// <summary>An expert of the panel: the token header on the API, the link's cookie on the pages.</summary>
    private static async Task<Caller> ExpertAsync(TestApp app, string name, SmallPanel panel)
    {
        var (membership, token, _) = panel.Members[0];
        var pages = await StaffPages.ExpertClientAsync(app, token);
        return new Caller(name, null, true, app.Client().WithExpertToken(token), pages, panel.PanelId, membership, token);
    }

    /// <summary>Every endpoint that is not a page, as "METHOD /route" (a trailing slash of a group's root dropped).</summary>
    private static List<ApiEndpoint> Discover(IServiceProvider services) =>
        services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.Metadata.GetMetadata<PageActionDescriptor>() is null)
            .SelectMany(e => (e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? ["GET"])
                .Select(m => new ApiEndpoint(m, Normalise(e.RoutePattern.RawText ?? ""),
                    e.Metadata.GetMetadata<IAcceptsMetadata>()?.ContentTypes.Contains("multipart/form-data") == true)))
            .Distinct().OrderBy(e => e.Key, StringComparer.Ordinal).ToList();

    private static string Normalise(string raw)
    {
        var route = "/" + raw.Trim('/');
        return route;
    }

    private static string Shorten(string text) => text.Length <= 160 ? text : text[..160] + "...";

    [GeneratedRegex(@"\{\*?([A-Za-z_][A-Za-z0-9_]*)[^}]*\}")]
    private static partial Regex RouteParameter();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteAuthorizationMatrixTests(SqliteFixture fixture) : AuthorizationMatrixTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresAuthorizationMatrixTests(PostgresFixture fixture) : AuthorizationMatrixTests(fixture);
