using System.Net;
using System.Net.Http.Headers;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Protections;

/// <summary>
/// What a service facing the internet sends with every answer (security headers, HSTS), how its
/// cookies are marked, and the rate limits on the doors an attacker knocks on.
/// </summary>
public abstract partial class HardeningTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [System.Text.RegularExpressions.GeneratedRegex(@"<script(?![^>]*\bsrc=)[^>]*>|\son[a-z]+\s*=|\sstyle\s*=|<style", System.Text.RegularExpressions.RegexOptions.IgnoreCase)]
    private static partial System.Text.RegularExpressions.Regex InlineCode();

    private static readonly Uri Https = new("https://panelround.test");

    private static readonly Dictionary<string, string?> Production = new()
    {
        [TestApp.EnvironmentSetting] = "Production",
        ["Security:SecureCookies"] = "true",
    };

    /// <summary>
    /// Every GET route of the endpoint data source (API, pages, OpenAPI) as a staff member and
    /// anonymously, plus error answers (400, 401, 404, 405): each carries the policy headers, and
    /// HSTS outside Development. A route added later is covered without editing this test.
    /// </summary>
    [SkippableFact]
    public async Task EveryRouteAndErrorAnswer_CarriesTheSecurityHeaders_AndHstsInProduction()
    {
        // The policy itself: no framing, no inline script or style.
        Assert.Contains("frame-ancestors 'none'", Hardening.ContentSecurityPolicy, StringComparison.Ordinal);
        Assert.DoesNotContain("unsafe-inline", Hardening.ContentSecurityPolicy, StringComparison.Ordinal);
        var app = await StartAsync(Production);
        var panel = await SmallPanel.CreateAsync(app, 3);
        var staff = HttpsClient(app, await ApiKeyAsync(app, Roles.Administrator));
        var anonymous = HttpsClient(app);
        var urls = GetRoutes(app, panel).ToList();
        Assert.True(urls.Count > 40, $"Only {urls.Count} GET routes found.");
        var checkedResponses = 0;
        var htmlPages = 0;
        foreach (var url in urls)
        {
            foreach (var client in new[] { staff, anonymous })
            {
                using var response = await client.GetAsync(url);
                AssertHeaders(response, url, hsts: true);
                checkedResponses++;
                if (response.Content.Headers.ContentType?.MediaType == "text/html")
                {
                    // What the policy would block, the page must not need: no inline script, handler or style.
                    var html = await response.Content.ReadAsStringAsync();
                    Assert.False(InlineCode().IsMatch(html), $"{url}: inline script, event handler or style: {InlineCode().Match(html).Value}");
                    htmlPages++;
                }
            }
        }
        var errors = new (HttpMethod Method, string Url, HttpContent? Body)[]
        {
            (HttpMethod.Post, "/api/panels", new StringContent("{ not json", System.Text.Encoding.UTF8, "application/json")),
            (HttpMethod.Get, "/api/panels", null),
            (HttpMethod.Get, "/no/such/page", null),
            (HttpMethod.Delete, "/api/panels", null),
        };
        foreach (var (method, url, body) in errors)
        {
            using var request = new HttpRequestMessage(method, url) { Content = body };
            using var response = await (url == "/api/panels" && method == HttpMethod.Get ? anonymous : staff).SendAsync(request);
            Assert.True((int)response.StatusCode >= 400, $"{method} {url}: {(int)response.StatusCode}");
            AssertHeaders(response, $"{method} {url}", hsts: true);
        }
        Assert.True(checkedResponses > 80);
        Assert.True(htmlPages > 10, $"{htmlPages} HTML pages read.");

        // Development: the same headers, no HSTS (a developer's localhost must not be pinned to HTTPS).
        var dev = await StartAsync(new Dictionary<string, string?> { [TestApp.EnvironmentSetting] = "Development" });
        using var devResponse = await HttpsClient(dev).GetAsync("/");
        AssertHeaders(devResponse, "/ (Development)", hsts: false);
    }

    /// <summary>
    /// In Production every cookie the app sets is Secure, HttpOnly and SameSite: the staff sign-in,
    /// the expert link, the antiforgery cookie. The link is redeemed over plain HTTP (a proxy that
    /// forgot to say https), so that "Secure" comes from the setting, not from the request's scheme.
    /// </summary>
    [SkippableFact]
    public async Task Cookies_InProduction_AreSecureHttpOnlyAndSameSite()
    {
        var app = await StartAsync(Production);
        var panel = await SmallPanel.CreateAsync(app, 3);
        var cookies = new List<string>();

        var plain = app.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = false });
        using (var link = await plain.GetAsync($"/e/{panel.Members[0].Token}"))
        {
            Assert.Equal(HttpStatusCode.Redirect, link.StatusCode);
            cookies.AddRange(link.Headers.GetValues("Set-Cookie"));
        }

        var client = HttpsClient(app);
        using (var login = await client.GetAsync("/Account/Login"))
        {
            cookies.AddRange(login.Headers.GetValues("Set-Cookie"));
        }
        var email = $"cookie-{Guid.NewGuid():N}@panel.example";
        using (var scope = app.Services.CreateScope())
        {
            await StaffAccounts.EnsureRolesAsync(scope.ServiceProvider);
            var users = scope.ServiceProvider.GetRequiredService<Microsoft.AspNetCore.Identity.UserManager<StaffUser>>();
            Assert.True((await StaffAccounts.CreateAsync(users, email, "Cookie test", StaffCookieClient.Password, [Roles.Facilitator])).Succeeded);
        }
        var token = await StaffCookieClient.TokenFromAsync(client, "/Account/Login");
        using (var signIn = await client.PostFormAsync("/Account/Login", token, [new("Input.Email", email), new("Input.Password", StaffCookieClient.Password)]))
        {
            Assert.Equal(HttpStatusCode.Redirect, signIn.StatusCode);
            cookies.AddRange(signIn.Headers.GetValues("Set-Cookie"));
        }

        foreach (var name in new[] { "panelround.staff", "panelround.expert", ".AspNetCore.Antiforgery" })
        {
            Assert.Contains(cookies, c => c.StartsWith(name, StringComparison.Ordinal));
        }
        foreach (var cookie in cookies)
        {
            var attributes = cookie.Split(';').Select(a => a.Trim().ToLowerInvariant()).ToList();
            Assert.True(attributes.Contains("secure"), $"Not Secure: {cookie}");
            Assert.True(attributes.Contains("httponly"), $"Not HttpOnly: {cookie}");
            Assert.True(attributes.Any(a => a is "samesite=lax" or "samesite=strict"), $"No SameSite: {cookie}");
        }
    }

    /// <summary>
    /// Each guarded door has its own budget per client address: the request over it answers 429
    /// with Retry-After and a ProblemDetails; another address is not affected; other routes are not limited.
    /// </summary>
    [SkippableTheory]
    [InlineData("sign-in", "RateLimits:SignInPerMinute")]
    [InlineData("link", "RateLimits:LinkPerMinute")]
    [InlineData("expert-api", "RateLimits:ExpertApiPerMinute")]
    [InlineData("api-key", "RateLimits:ApiKeyPerMinute")]
    public async Task RateLimit_OverTheBudget_Is429WithRetryAfter_PerClientAddress(string door, string setting)
    {
        var app = await StartAsync(new Dictionary<string, string?> { ["RateLimits:Enabled"] = "true", [setting] = "3" });
        (string Method, string Path, string? Header) request = door switch
        {
            "sign-in" => ("POST", "/Account/Login", null),
            "link" => ("GET", "/e/not-a-token", null),
            "expert-api" => ("GET", "/api/expert/panels/1", null),
            _ => ("GET", "/api/panels", "Bearer prk_not-a-key"),
        };
        for (var i = 0; i < 3; i++)
        {
            var ok = await SendFromAsync(app, "203.0.113.7", request.Method, request.Path, request.Header);
            Assert.NotEqual(StatusCodes.Status429TooManyRequests, ok.StatusCode);
        }
        var refused = await SendFromAsync(app, "203.0.113.7", request.Method, request.Path, request.Header);
        Assert.Equal(StatusCodes.Status429TooManyRequests, refused.StatusCode);
        Assert.True(int.Parse(refused.Response.Headers.RetryAfter.ToString(), System.Globalization.CultureInfo.InvariantCulture) >= 1);
        Assert.StartsWith("application/problem+json", refused.Response.ContentType, StringComparison.Ordinal);
        Assert.Equal(Hardening.ContentSecurityPolicy, refused.Response.Headers.ContentSecurityPolicy.ToString());

        var otherAddress = await SendFromAsync(app, "198.51.100.9", request.Method, request.Path, request.Header);
        Assert.NotEqual(StatusCodes.Status429TooManyRequests, otherAddress.StatusCode);
        var unguarded = await SendFromAsync(app, "203.0.113.7", "GET", "/health/ready", null);
        Assert.Equal(StatusCodes.Status200OK, unguarded.StatusCode);
    }

    /// <summary>
    /// Behind a TLS-terminating proxy the client address and scheme come from X-Forwarded-For/-Proto,
    /// but only when the request comes from a configured proxy; anyone else's forwarded headers are ignored.
    /// </summary>
    [SkippableFact]
    public async Task ForwardedHeaders_OnlyFromAConfiguredProxy_SetTheClientAddressForTheLimits()
    {
        var app = await StartAsync(new Dictionary<string, string?>
        {
            ["RateLimits:Enabled"] = "true",
            ["RateLimits:LinkPerMinute"] = "2",
            ["Security:KnownProxies"] = "10.0.0.5",
        });
        // Through the proxy, two clients: each has its own budget.
        for (var i = 0; i < 2; i++)
        {
            Assert.NotEqual(429, (await SendFromAsync(app, "10.0.0.5", "GET", "/e/x", null, forwardedFor: "203.0.113.1")).StatusCode);
        }
        Assert.Equal(429, (await SendFromAsync(app, "10.0.0.5", "GET", "/e/x", null, forwardedFor: "203.0.113.1")).StatusCode);
        Assert.NotEqual(429, (await SendFromAsync(app, "10.0.0.5", "GET", "/e/x", null, forwardedFor: "203.0.113.2")).StatusCode);
        // A stranger cannot escape its budget by inventing forwarded addresses.
        for (var i = 0; i < 2; i++)
        {
            Assert.NotEqual(429, (await SendFromAsync(app, "192.0.2.44", "GET", "/e/x", null, forwardedFor: $"198.51.100.{i}")).StatusCode);
        }
        Assert.Equal(429, (await SendFromAsync(app, "192.0.2.44", "GET", "/e/x", null, forwardedFor: "198.51.100.99")).StatusCode);
    }

    private static void AssertHeaders(HttpResponseMessage response, string what, bool hsts)
    {
        string? Header(string name) =>
            response.Headers.TryGetValues(name, out var v) ? string.Join(",", v)
            : response.Content.Headers.TryGetValues(name, out var c) ? string.Join(",", c) : null;
        Assert.True(Header("Content-Security-Policy") == Hardening.ContentSecurityPolicy, $"{what} ({(int)response.StatusCode}): CSP {Header("Content-Security-Policy") ?? "missing"}");
        Assert.True(Header("X-Content-Type-Options") == "nosniff", $"{what}: X-Content-Type-Options");
        Assert.True(Header("Referrer-Policy") == "no-referrer", $"{what}: Referrer-Policy");
        Assert.True(Header("X-Frame-Options") == "DENY", $"{what}: X-Frame-Options");
        var strict = Header("Strict-Transport-Security");
        Assert.True(hsts ? strict?.StartsWith("max-age=", StringComparison.Ordinal) == true : strict is null, $"{what}: Strict-Transport-Security {strict ?? "missing"}");
    }

    /// <summary>Every GET route, its parameters filled with ids of the panel (others 1, a token an unknown string).</summary>
    private static IEnumerable<string> GetRoutes(TestApp app, SmallPanel panel)
    {
        var endpoints = app.Services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>();
        foreach (var e in endpoints)
        {
            var methods = e.Metadata.GetMetadata<IHttpMethodMetadata>()?.HttpMethods;
            if (methods is not null && !methods.Contains("GET"))
            {
                continue;
            }
            var parts = e.RoutePattern.PathSegments.Select(s => string.Concat(s.Parts.Select(p => p switch
            {
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternLiteralPart l => l.Content,
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternSeparatorPart s => s.Content,
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternParameterPart { Name: "id" } => panel.PanelId.ToString(System.Globalization.CultureInfo.InvariantCulture),
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternParameterPart { Name: "token" } => "not-a-token",
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternParameterPart { Name: "documentName" } => "v1",
                Microsoft.AspNetCore.Routing.Patterns.RoutePatternParameterPart => "1",
                _ => "",
            })));
            yield return "/" + string.Join('/', parts).TrimEnd('/');
        }
    }

    private static HttpClient HttpsClient(TestApp app, string? bearer = null)
    {
        var client = app.CreateClient(new WebApplicationFactoryClientOptions { BaseAddress = Https, AllowAutoRedirect = false, HandleCookies = true });
        if (bearer is not null)
        {
            client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", bearer);
        }
        return client;
    }

    private static Task<string> ApiKeyAsync(TestApp app, string role) =>
        app.WithDbAsync(db => ApiKeys.CreateAsync(db, $"hardening-{Guid.NewGuid():N}", role, "test"));

    /// <summary>A request from a given client address (the test server has no sockets), optionally through a proxy.</summary>
    private static async Task<(int StatusCode, HttpResponse Response)> SendFromAsync(TestApp app, string address, string method, string path, string? authorization, string? forwardedFor = null)
    {
        var context = await app.Server.SendAsync(c =>
        {
            c.Connection.RemoteIpAddress = IPAddress.Parse(address);
            c.Request.Method = method;
            c.Request.Path = path;
            c.Request.Scheme = "https";
            c.Request.Host = new HostString("panelround.test");
            if (authorization is not null)
            {
                c.Request.Headers.Authorization = authorization;
            }
            if (forwardedFor is not null)
            {
                c.Request.Headers["X-Forwarded-For"] = forwardedFor;
                c.Request.Headers["X-Forwarded-Proto"] = "https";
            }
            if (method == "POST")
            {
                c.Request.ContentType = "application/x-www-form-urlencoded";
                c.Request.Body = new MemoryStream("Input.Email=a%40b.example&Input.Password=wrong"u8.ToArray());
            }
        });
        return (context.Response.StatusCode, context.Response);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteHardeningTests(SqliteFixture fixture) : HardeningTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresHardeningTests(PostgresFixture fixture) : HardeningTests(fixture);
