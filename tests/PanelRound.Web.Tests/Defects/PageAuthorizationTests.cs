using System.Net;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Mvc.RazorPages.Infrastructure;
using Microsoft.AspNetCore.Routing;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// Every page handler, found in the app's endpoints, called by every role through the real
/// cookie sign-in with a valid antiforgery token: a page that writes allows exactly the roles its
/// API twin allows, and a refused call changes nothing.
/// </summary>
public abstract partial class PageAuthorizationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>Who may call a page handler.</summary>
    internal enum Access
    {
        /// <summary>Anyone, signed in or not.</summary>
        Public,

        /// <summary>The expert behind a personal link; without one the page sends to /expert/link-needed.</summary>
        ExpertLink,

        /// <summary>The Staff policy: any staff role.</summary>
        Staff,

        /// <summary>The Reviewer policy: Reviewer, Facilitator, Administrator.</summary>
        Reviewer,

        /// <summary>The Facilitator policy: Facilitator, Administrator.</summary>
        Facilitator,

        /// <summary>The Administrator policy.</summary>
        Administrator,
    }

    /// <summary>
    /// The expected access of every page handler, keyed "METHOD /Page [handler]". A writing handler
    /// has the policy of the API route that makes the same change (Apis/*.cs); a new handler fails
    /// the coverage check until it is added here.
    /// </summary>
    internal static readonly IReadOnlyDictionary<string, Access> Expected = new Dictionary<string, Access>
    {
        ["GET /Index"] = Access.Public,
        ["GET /Error"] = Access.Public,
        ["GET /ApiReference"] = Access.Public,
        ["GET /Account/AccessDenied"] = Access.Public,
        ["GET /Account/Login"] = Access.Public,
        ["POST /Account/Login"] = Access.Public,
        ["GET /Account/Logout"] = Access.Public,
        ["POST /Account/Logout"] = Access.Public,
        ["GET /Answer/Index"] = Access.ExpertLink,
        ["POST /Answer/Index"] = Access.ExpertLink,
        ["GET /Answer/Link"] = Access.ExpertLink,
        ["GET /Answer/LinkNeeded"] = Access.Public,

        // API keys and the audit log: GET /api/audit is Administrator; keys have no API route.
        ["GET /Admin/Index"] = Access.Administrator,
        ["POST /Admin/Index CreateKey"] = Access.Administrator,
        ["POST /Admin/Index RevokeKey"] = Access.Administrator,

        // GET and POST /api/experts: Facilitator.
        ["GET /Staff/Experts/Index"] = Access.Facilitator,
        ["POST /Staff/Experts/Index"] = Access.Facilitator,

        // POST /api/imports/past-panels: Facilitator.
        ["GET /Staff/Imports/Index"] = Access.Facilitator,
        ["POST /Staff/Imports/Index"] = Access.Facilitator,

        // GET /api/indicators...: Staff; POST /api/indicators and /api/indicators/{id}/observations(/csv): Facilitator.
        ["GET /Staff/Indicators/Index"] = Access.Staff,
        ["POST /Staff/Indicators/Index"] = Access.Facilitator,
        ["GET /Staff/Indicators/Details"] = Access.Staff,
        ["POST /Staff/Indicators/Details"] = Access.Facilitator,

        // POST /api/outcomes and /api/outcomes/csv: Reviewer.
        ["GET /Staff/Outcomes/Index"] = Access.Reviewer,
        ["POST /Staff/Outcomes/Index Record"] = Access.Reviewer,
        ["POST /Staff/Outcomes/Index Import"] = Access.Reviewer,

        // Panel set-up, links, rounds, reminders, conclusion under /api/panels: Facilitator; reading panels and results: Staff.
        ["GET /Staff/Panels/Index"] = Access.Staff,
        ["GET /Staff/Panels/Results"] = Access.Staff,
        ["GET /Staff/Panels/Create"] = Access.Facilitator,
        ["POST /Staff/Panels/Create"] = Access.Facilitator,
        ["GET /Staff/Panels/Edit"] = Access.Facilitator,
        ["POST /Staff/Panels/Edit"] = Access.Facilitator,
        ["GET /Staff/Panels/Question"] = Access.Facilitator,
        ["POST /Staff/Panels/Question"] = Access.Facilitator,
        ["GET /Staff/Panels/Details"] = Access.Facilitator,
        ["POST /Staff/Panels/Details AddMember"] = Access.Facilitator,
        ["POST /Staff/Panels/Details Reissue"] = Access.Facilitator,
        ["POST /Staff/Panels/Details Revoke"] = Access.Facilitator,
        ["POST /Staff/Panels/Details RemoveQuestion"] = Access.Facilitator,
        ["POST /Staff/Panels/Details OpenRound"] = Access.Facilitator,
        ["POST /Staff/Panels/Details CloseRound"] = Access.Facilitator,
        ["POST /Staff/Panels/Details Remind"] = Access.Facilitator,
        ["POST /Staff/Panels/Details Conclude"] = Access.Facilitator,
        // PUT /api/panels/{id}/questions/{questionId}/true-value: Facilitator; GET .../calibration(/cross-validation): Staff.
        ["POST /Staff/Panels/Details TrueValue"] = Access.Facilitator,
        // POST /api/panels/{id}/relations and DELETE .../relations/{relationId}: Facilitator.
        ["POST /Staff/Panels/Details DeclareRelation"] = Access.Facilitator,
        ["POST /Staff/Panels/Details RemoveRelation"] = Access.Facilitator,
        ["GET /Staff/Panels/Calibration"] = Access.Staff,
        ["GET /Staff/Panels/CrossValidation"] = Access.Staff,

        // GET /api/scorecard...: Staff; the pages ask for the Reviewer policy, which every staff role meets.
        ["GET /Staff/Scorecard/Index"] = Access.Reviewer,
        ["GET /Staff/Scorecard/Panel"] = Access.Reviewer,
        ["GET /Staff/Scorecard/Expert"] = Access.Reviewer,
        ["GET /Staff/Scorecard/Backtest"] = Access.Reviewer,
    };

    /// <summary>The roles each staff policy admits, as AuthSetup defines them.</summary>
    internal static IReadOnlyList<string> Admits(Access access) => access switch
    {
        Access.Staff or Access.Reviewer => [Roles.Reviewer, Roles.Facilitator, Roles.Administrator],
        Access.Facilitator => [Roles.Facilitator, Roles.Administrator],
        Access.Administrator => [Roles.Administrator],
        _ => [],
    };

    /// <summary>What a response tells about access.</summary>
    internal enum Answer
    {
        Allowed,
        SignInRequired,
        AccessDenied,
        LinkNeeded,
    }

    /// <summary>A page handler found in the endpoints: its page, verb, name, route template and parameters.</summary>
    internal sealed record PageHandler(string Page, string Method, string? Name, string Route, IReadOnlyList<(string Name, Type Type)> Parameters)
    {
        public string Key => Name is null ? $"{Method} {Page}" : $"{Method} {Page} {Name}";
    }

    /// <summary>Entities the calls point at, so that a refused call would have written had it been allowed.</summary>
    internal sealed record Seed(int IndicatorId, string IndicatorKey, int PanelId, int QuestionId, int NewExpertId, int MembershipId, int ApiKeyId,
        int SecondQuestionId = 0, int RelationId = 0);

    [SkippableFact]
    public async Task EveryPageHandler_EveryRole_AllowsExactlyTheExpectedPolicy()
    {
        var app = await StartAsync();
        var seed = await SeedAsync(app);
        var handlers = await DiscoverAsync(app.Services);

        Assert.Equal(Expected.Keys.Order(StringComparer.Ordinal), handlers.Select(h => h.Key).Order(StringComparer.Ordinal));
        foreach (var h in handlers)
        {
            var unfilled = h.Parameters.Where(p => p.Type != typeof(IFormFile) && !h.Route.Contains('{' + p.Name, StringComparison.OrdinalIgnoreCase)
                && !HandlerArguments(seed).ContainsKey(p.Name)).Select(p => p.Name).ToList();
            Assert.True(unfilled.Count == 0, $"{h.Key}: no test value for parameter(s) {string.Join(", ", unfilled)}.");
        }

        // Roles that may do least go first, so that what an allowed role changes cannot hide a refused write.
        string?[] roles = [null, Roles.Reviewer, Roles.Facilitator, Roles.Administrator];
        var failures = new List<string>();
        var calls = 0;
        foreach (var role in roles)
        {
            var staff = role is null ? null : await StaffCookieClient.SignedInAsync(app, role);
            var staffToken = staff is null ? null : await StaffCookieClient.TokenFromAsync(staff, "/Staff/Panels");
            foreach (var h in handlers.Where(h => role is null || !IsExpertOrAccountPage(h.Page)))
            {
                var access = Expected[h.Key];
                var expected = role is null
                    ? access switch { Access.Public => Answer.Allowed, Access.ExpertLink => Answer.LinkNeeded, _ => Answer.SignInRequired }
                    : access == Access.Public || Admits(access).Contains(role) ? Answer.Allowed : Answer.AccessDenied;

                // Anonymous calls each start from a new client, so that no cookie carries over between them.
                var client = staff ?? app.Client();
                var token = staffToken ?? await StaffCookieClient.TokenFromAsync(client, "/Account/Login");
                var before = expected == Answer.Allowed ? null : await FingerprintAsync(app);
                var url = Url(h, seed);
                using var response = h.Method == "GET"
                    ? await client.GetAsync(url)
                    : await client.PostFormAsync(url, token, FormFor(h, seed));
                calls++;
                var answer = Classify(response);
                var who = role ?? "anonymous";
                if (answer != expected)
                {
                    failures.Add($"{h.Key} as {who}: expected {expected}, got {answer} ({(int)response.StatusCode} {response.Headers.Location})");
                }
                else if (expected == Answer.Allowed && response.StatusCode == HttpStatusCode.BadRequest)
                {
                    // Pages answer bad input with the form and its messages; a 400 here means the antiforgery token was not accepted.
                    failures.Add($"{h.Key} as {who}: 400, the call did not reach the page");
                }
                if (before is not null && await FingerprintAsync(app) is var after && after != before)
                {
                    failures.Add($"{h.Key} as {who}: refused, yet the data changed: {before} -> {after}");
                }
            }
        }
        Assert.True(failures.Count == 0, $"{failures.Count} of {calls} calls went wrong:\n" + string.Join('\n', failures));
    }

    [SkippableFact]
    public async Task IndicatorDetailsPost_ReviewerCookie_IsRefusedAndObservationUnchanged()
    {
        var app = await StartAsync();
        var api = await app.StaffClientAsync(Roles.Facilitator);
        var id = (int)(await api.PostOk("/api/indicators", new { key = "rent-harbour", name = "Office rent, Calderport harbour", unitLabel = "EUR/m²/month", decimals = 2 }))["id"]!;
        await api.PostOk($"/api/indicators/{id}/observations", new[] { new { period = "2024", value = 18.5, source = "harbour survey" } }, HttpStatusCode.OK);
        var page = $"/Staff/Indicators/Details/{id}";
        KeyValuePair<string, string>[] correction = [new("Pasted", "2024,99.5,corrected")];

        var reviewer = await StaffCookieClient.SignedInAsync(app, Roles.Reviewer);
        var refused = await reviewer.PostFormAsync(page, await StaffCookieClient.TokenFromAsync(reviewer, page), correction);

        Assert.Equal(Answer.AccessDenied, Classify(refused));
        var rows = await app.WithDbAsync(db => db.Observations.AsNoTracking().Where(o => o.IndicatorId == id).ToListAsync());
        var row = Assert.Single(rows);
        Assert.Equal(18.5, row.Value);
        Assert.Null(row.SupersededAt);
        var current = (await api.GetOk($"/api/indicators/{id}/observations")).AsArray();
        Assert.Equal(18.5, (double)Assert.Single(current)!["value"]!);

        // The same form from a facilitator's cookie corrects the value: the refused call was a real write.
        var facilitator = await StaffCookieClient.SignedInAsync(app, Roles.Facilitator);
        var done = await facilitator.PostFormAsync(page, await StaffCookieClient.TokenFromAsync(facilitator, page), correction);
        Assert.Equal(HttpStatusCode.Redirect, done.StatusCode);
        var corrected = (await api.GetOk($"/api/indicators/{id}/observations")).AsArray();
        Assert.Equal(99.5, (double)Assert.Single(corrected)!["value"]!);
    }

    /// <summary>
    /// Handlers that move the panel through its rounds come last, in this order, so that the set-up
    /// handlers before them find a draft panel (with this order every Facilitator call that needs no
    /// file writes, which shows that the same calls, refused, would have written).
    /// </summary>
    private static readonly string?[] RoundLifecycle = ["OpenRound", "Remind", "CloseRound", "Conclude"];

    private static bool IsExpertOrAccountPage(string page) =>
        page.StartsWith("/Answer/", StringComparison.Ordinal) || page.StartsWith("/Account/", StringComparison.Ordinal);

    /// <summary>Every handler of every page endpoint; a page without handler methods answers GET.</summary>
    internal static async Task<List<PageHandler>> DiscoverAsync(IServiceProvider services)
    {
        var loader = services.GetRequiredService<PageLoader>();
        var found = new Dictionary<string, PageHandler>(StringComparer.Ordinal);
        var pages = services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Select(e => (Endpoint: e, Page: e.Metadata.GetMetadata<PageActionDescriptor>()))
            .Where(x => x.Page is not null)
            .GroupBy(x => x.Page!.ViewEnginePath, StringComparer.Ordinal);
        foreach (var page in pages)
        {
            // An Index page answers at its folder and at /Index; the shorter route is the one links use.
            var (endpoint, descriptor) = page.OrderBy(x => x.Endpoint.RoutePattern.RawText?.Length ?? 0).First();
            var compiled = descriptor as CompiledPageActionDescriptor ?? await loader.LoadAsync(descriptor!, endpoint.Metadata);
            var route = "/" + (endpoint.RoutePattern.RawText ?? "").TrimStart('/');
            foreach (var m in compiled.HandlerMethods)
            {
                var h = new PageHandler(page.Key, m.HttpMethod.ToUpperInvariant(), string.IsNullOrEmpty(m.Name) ? null : m.Name, route,
                    // Parameters the framework fills from the services are not the caller's to send.
                    m.Parameters.Where(p => p.BindingInfo?.BindingSource != Microsoft.AspNetCore.Mvc.ModelBinding.BindingSource.Services)
                        .Select(p => (p.Name, p.ParameterType)).ToList());
                found[h.Key] = h;
            }
            if (!compiled.HandlerMethods.Any(m => m.HttpMethod.Equals("GET", StringComparison.OrdinalIgnoreCase)))
            {
                var h = new PageHandler(page.Key, "GET", null, route, []);
                found[h.Key] = h;
            }
        }
        return found.Values.OrderBy(h => Array.IndexOf(RoundLifecycle, h.Name)).ThenBy(h => h.Key, StringComparer.Ordinal).ToList();
    }

    /// <summary>The handler's route with its parameters filled with entities that exist (a bogus personal link on purpose).</summary>
    internal static string Url(PageHandler h, Seed seed)
    {
        var id = h.Page switch
        {
            "/Staff/Indicators/Details" => seed.IndicatorId,
            "/Staff/Scorecard/Expert" => seed.NewExpertId,
            _ when h.Page.StartsWith("/Staff/Panels/", StringComparison.Ordinal) || h.Page == "/Staff/Scorecard/Panel" => seed.PanelId,
            _ => 1,
        };
        var path = RouteParameter().Replace(h.Route, m => m.Groups[1].Value.Equals("id", StringComparison.OrdinalIgnoreCase)
            ? id.ToString(System.Globalization.CultureInfo.InvariantCulture) : "1");
        return h.Name is null ? path : $"{path}?handler={h.Name}";
    }

    /// <summary>
    /// One form for every page, filled so that each writing handler would change something if
    /// allowed: the fields of every page's input (they do not collide), plus the handler's own
    /// arguments.
    /// </summary>
    internal static List<KeyValuePair<string, string>> FormFor(PageHandler h, Seed seed)
    {
        var form = new Dictionary<string, string>(StringComparer.Ordinal)
        {
            ["Input.Key"] = "matrix-vacancy",
            ["Input.Name"] = "Matrix vacancy rate",
            ["Input.UnitLabel"] = "%",
            ["Input.Decimals"] = "1",
            ["Input.Email"] = "matrix.expert@panel.example",
            ["Input.Affiliation"] = "Calderport Lettings",
            ["Input.Indicator"] = seed.IndicatorKey,
            ["Input.Period"] = "2024",
            ["Input.Value"] = "4321",
            ["Input.Source"] = "matrix",
            ["Input.ObservedOn"] = "2025-01-31",
            ["Input.Title"] = "Matrix outlook",
            ["Input.Brief"] = "Harbour district.",
            ["Input.StartsOn"] = "2026-11-02",
            ["Input.TargetPeriods"] = "2027-2029",
            ["Input.IndicatorId"] = Invariant(seed.IndicatorId),
            ["Input.Label"] = "Matrix question",
            ["Input.Format"] = "Point",
            ["Input.HardMin"] = "0",
            ["Input.HardMax"] = "100000",
            ["PanelId"] = Invariant(seed.PanelId),
            ["Pasted"] = "2024,9999,matrix correction",
            ["KeyName"] = "matrix key",
            ["KeyRole"] = Roles.Reviewer,
            ["ClosesAt"] = DateTime.UtcNow.AddDays(10).ToString("yyyy-MM-ddTHH:mm", System.Globalization.CultureInfo.InvariantCulture),
            // The panel page's relation form: the two seeded questions and a derived third term.
            ["Relation.Shape"] = "Product",
            ["Relation.Result.QuestionId"] = Invariant(seed.QuestionId),
            ["Relation.First.QuestionId"] = Invariant(seed.SecondQuestionId),
            ["Relation.Second.Label"] = "Matrix implied yield",
            ["Relation.Second.Unit"] = "%",
            ["Relation.Second.Factor"] = "0.01",
        };
        var arguments = HandlerArguments(seed);
        foreach (var p in h.Parameters.Where(p => arguments.ContainsKey(p.Name) && !h.Route.Contains('{' + p.Name, StringComparison.OrdinalIgnoreCase)))
        {
            form[p.Name] = arguments[p.Name];
        }
        return form.ToList();
    }

    private static Dictionary<string, string> HandlerArguments(Seed seed) => new(StringComparer.OrdinalIgnoreCase)
    {
        ["expertId"] = Invariant(seed.NewExpertId),
        ["membershipId"] = Invariant(seed.MembershipId),
        ["questionId"] = Invariant(seed.QuestionId),
        ["number"] = "1",
        ["trueValue"] = "100",
        ["id"] = Invariant(seed.ApiKeyId),
        ["action"] = "submit",
        ["relationId"] = Invariant(seed.RelationId),
    };

    private static string Invariant(int v) => v.ToString(System.Globalization.CultureInfo.InvariantCulture);

    internal static Answer Classify(HttpResponseMessage r)
    {
        var location = r.Headers.Location;
        var path = location is null ? "" : location.IsAbsoluteUri ? location.AbsolutePath : location.OriginalString.Split('?')[0];
        var redirect = (int)r.StatusCode is >= 300 and < 400;
        return r.StatusCode switch
        {
            HttpStatusCode.Forbidden => Answer.AccessDenied,
            HttpStatusCode.Unauthorized => Answer.SignInRequired,
            _ when redirect && path.StartsWith("/Account/AccessDenied", StringComparison.OrdinalIgnoreCase) => Answer.AccessDenied,
            _ when redirect && path.StartsWith("/Account/Login", StringComparison.OrdinalIgnoreCase) => Answer.SignInRequired,
            _ when redirect && path.StartsWith("/expert/link-needed", StringComparison.OrdinalIgnoreCase) => Answer.LinkNeeded,
            _ => Answer.Allowed,
        };
    }

    /// <summary>
    /// The row count of every table. Every state change writes an audit event in the same save,
    /// so a change that only updates rows still adds one to the audit table's count.
    /// </summary>
    private static Task<string> FingerprintAsync(TestApp app) => app.WithDbAsync(async db =>
    {
        var counts = new List<string>();
        foreach (var table in db.Model.GetEntityTypes().Select(t => t.GetTableName()).OfType<string>().Distinct().Order(StringComparer.Ordinal))
        {
            var sql = "SELECT COUNT(*) AS \"Value\" FROM \"" + table + "\"";
            counts.Add(table + "=" + (await db.Database.SqlQueryRaw<long>(sql).SingleAsync()).ToString(System.Globalization.CultureInfo.InvariantCulture));
        }
        return string.Join(", ", counts);
    });

    /// <summary>An indicator with a series, a draft panel with a question and a member, an expert not yet on it, an API key.</summary>
    internal static async Task<Seed> SeedAsync(TestApp app)
    {
        var api = await app.StaffClientAsync(Roles.Facilitator);
        const string key = "price-harbour";
        var indicator = (int)(await api.PostOk("/api/indicators", new { key, name = "Apartment price, harbour district", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        await api.PostOk($"/api/indicators/{indicator}/observations",
            Enumerable.Range(2016, 9).Select(y => new { period = y.ToString(System.Globalization.CultureInfo.InvariantCulture), value = 3000 + 100 * (y - 2016), source = "test series" }).ToArray(),
            HttpStatusCode.OK);
        var panel = (int)(await api.PostOk("/api/panels", new
        {
            title = "Harbour outlook", brief = "Prices in the harbour district.", startsOn = "2026-11-02", targetPeriods = "2027-2029",
            settings = new { outlierRule = "TukeyFences", trimFraction = 0.1, minimumGroupSize = 3, outliersMustJustify = false },
        }))["id"]!;
        var question = (int)(await api.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price per m²", format = "Point", hardMin = 500, hardMax = 20000 }))["id"]!;
        var second = (int)(await api.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price per m², upper floors", format = "Point", hardMin = 500, hardMax = 20000 }))["id"]!;
        var relation = (int)(await api.PostOk($"/api/panels/{panel}/relations", new
        {
            shape = "Sum", result = new { questionId = second }, first = new { questionId = question }, second = new { label = "Floor premium", unit = "EUR/m²" },
        }))["id"]!;
        var member = (int)(await api.PostOk("/api/experts", new { name = "Member Expert", email = "member@panel.example", affiliation = "Test" }))["id"]!;
        var newcomer = (int)(await api.PostOk("/api/experts", new { name = "Newcomer Expert", email = "newcomer@panel.example", affiliation = "Test" }))["id"]!;
        JsonNode link = await api.PostOk($"/api/panels/{panel}/members", new { expertId = member, sendInvitation = false });
        var apiKey = await app.WithDbAsync(db => db.ApiKeys.AsNoTracking().OrderBy(k => k.Id).Select(k => k.Id).FirstAsync());
        return new Seed(indicator, key, panel, question, newcomer, (int)link["membershipId"]!, apiKey, second, relation);
    }

    [GeneratedRegex(@"\{\*?([A-Za-z_][A-Za-z0-9_]*)[^}]*\}")]
    private static partial Regex RouteParameter();
}

[Collection(SqliteCollection.Name)]
public sealed class SqlitePageAuthorizationTests(SqliteFixture fixture) : PageAuthorizationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresPageAuthorizationTests(PostgresFixture fixture) : PageAuthorizationTests(fixture);
