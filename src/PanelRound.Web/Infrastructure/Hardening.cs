using System.Globalization;
using System.Net;
using System.Threading.RateLimiting;
using Microsoft.AspNetCore.HttpOverrides;
using Microsoft.AspNetCore.RateLimiting;
using Microsoft.Extensions.Options;

namespace PanelRound.Web.Infrastructure;

/// <summary>The <c>Security</c> settings: cookies, HSTS and the proxies whose forwarded headers are trusted.</summary>
public sealed class SecurityOptions
{
    public const string Section = "Security";

    /// <summary>
    /// <c>Security:SecureCookies</c>: cookies only over HTTPS. On by default; turn it off only for
    /// plain-HTTP development on one's own machine (appsettings.Development.json does).
    /// </summary>
    public bool SecureCookies { get; set; } = true;

    /// <summary><c>Security:HstsDays</c>: how long browsers keep to HTTPS once told (outside Development).</summary>
    public int HstsDays { get; set; } = 180;

    /// <summary>
    /// <c>Security:KnownProxies</c>: the addresses of TLS-terminating proxies, comma-separated. Only
    /// their X-Forwarded-For and X-Forwarded-Proto are believed; with none, no forwarded header is.
    /// </summary>
    public string KnownProxies { get; set; } = "";

    /// <summary><c>Security:KnownNetworks</c>: proxy networks in CIDR notation (e.g. 172.18.0.0/16), comma-separated.</summary>
    public string KnownNetworks { get; set; } = "";

    public IReadOnlyList<IPAddress> Proxies() =>
        KnownProxies.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(IPAddress.Parse).ToList();

    public IReadOnlyList<System.Net.IPNetwork> Networks() =>
        KnownNetworks.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(n => System.Net.IPNetwork.Parse(n)).ToList();

    public bool IsValid()
    {
        try
        {
            _ = Proxies();
            _ = Networks();
            return HstsDays >= 0;
        }
        catch (FormatException)
        {
            return false;
        }
    }
}

/// <summary>
/// The <c>RateLimits</c> settings: requests per client address and minute for the doors an
/// attacker knocks on. A client over its budget gets 429 with Retry-After.
/// </summary>
public sealed class RateLimitOptions
{
    public const string Section = "RateLimits";

    /// <summary><c>RateLimits:Enabled</c>.</summary>
    public bool Enabled { get; set; } = true;

    /// <summary>Staff sign-in posts per address and minute.</summary>
    public int SignInPerMinute { get; set; } = 10;

    /// <summary>Personal-link redemptions (<c>/e/{token}</c>) per address and minute.</summary>
    public int LinkPerMinute { get; set; } = 20;

    /// <summary>Expert API requests per address and minute (a form load and a few saves a minute is heavy use).</summary>
    public int ExpertApiPerMinute { get; set; } = 120;

    /// <summary>Requests that present an API key, per address and minute (guessing keys is the attack).</summary>
    public int ApiKeyPerMinute { get; set; } = 600;

    public bool IsValid() => SignInPerMinute > 0 && LinkPerMinute > 0 && ExpertApiPerMinute > 0 && ApiKeyPerMinute > 0;
}

/// <summary>Response headers, cookies, forwarded headers and rate limits for a service that faces the internet.</summary>
public static class Hardening
{
    /// <summary>
    /// Scripts, styles, images and fonts from this site only; no inline script or style, no
    /// plug-ins, no framing, forms post back here only. Charts are inline SVG markup (no style
    /// attributes); Bootstrap's form icons are data: images.
    /// </summary>
    public const string ContentSecurityPolicy =
        "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; font-src 'self'; connect-src 'self'; "
        + "object-src 'none'; base-uri 'self'; form-action 'self'; frame-ancestors 'none'";

    public static IHostApplicationBuilder AddPanelRoundHardening(this IHostApplicationBuilder builder)
    {
        var services = builder.Services;
        services.AddOptions<SecurityOptions>().BindConfiguration(SecurityOptions.Section)
            .Validate(o => o.IsValid(), "Security: KnownProxies must be IP addresses, KnownNetworks CIDR networks, HstsDays >= 0.").ValidateOnStart();
        services.AddOptions<RateLimitOptions>().BindConfiguration(RateLimitOptions.Section)
            .Validate(o => o.IsValid(), "RateLimits: every per-minute budget must be at least 1.").ValidateOnStart();
        var security = builder.Configuration.GetSection(SecurityOptions.Section).Get<SecurityOptions>() ?? new SecurityOptions();
        var cookiePolicy = security.SecureCookies ? CookieSecurePolicy.Always : CookieSecurePolicy.SameAsRequest;
        services.ConfigureAll<Microsoft.AspNetCore.Authentication.Cookies.CookieAuthenticationOptions>(o => o.Cookie.SecurePolicy = cookiePolicy);
        services.AddAntiforgery(o =>
        {
            o.Cookie.SecurePolicy = cookiePolicy;
            o.Cookie.HttpOnly = true;
            o.Cookie.SameSite = SameSiteMode.Strict;
        });
        services.Configure<ForwardedHeadersOptions>(o =>
        {
            o.ForwardedHeaders = ForwardedHeaders.XForwardedFor | ForwardedHeaders.XForwardedProto;
            o.ForwardLimit = 1;
            o.KnownProxies.Clear();
            o.KnownIPNetworks.Clear();
            foreach (var proxy in security.Proxies())
            {
                o.KnownProxies.Add(proxy);
            }
            foreach (var network in security.Networks())
            {
                o.KnownIPNetworks.Add(network);
            }
        });
        services.AddRateLimiter(o =>
        {
            o.GlobalLimiter = PartitionedRateLimiter.Create<HttpContext, string>(Partition);
            o.OnRejected = RejectedAsync;
        });
        return builder;
    }

    /// <summary>First in the pipeline: forwarded headers from known proxies, then the security headers (and HSTS on HTTPS outside Development) on every response.</summary>
    public static WebApplication UsePanelRoundHardening(this WebApplication app)
    {
        var security = app.Services.GetRequiredService<IOptions<SecurityOptions>>().Value;
        if (security.Proxies().Count > 0 || security.Networks().Count > 0)
        {
            app.UseForwardedHeaders();
        }
        // HSTS outside Development only: a developer's own machine must not be pinned to HTTPS.
        var hsts = app.Environment.IsDevelopment() || security.HstsDays == 0
            ? null
            : "max-age=" + ((long)TimeSpan.FromDays(security.HstsDays).TotalSeconds).ToString(CultureInfo.InvariantCulture);
        app.Use((ctx, next) =>
        {
            // Set as the response starts, so that error pages and ProblemDetails (which clear the headers) carry them too.
            ctx.Response.OnStarting(state =>
            {
                var context = (HttpContext)state;
                var headers = context.Response.Headers;
                if (hsts is not null && context.Request.IsHttps)
                {
                    headers.StrictTransportSecurity = hsts;
                }
                headers.ContentSecurityPolicy = ContentSecurityPolicy;
                headers.XContentTypeOptions = "nosniff";
                headers.XFrameOptions = "DENY";
                // Personal links carry their secret in the path: never send it on to another site.
                headers["Referrer-Policy"] = "no-referrer";
                headers["Permissions-Policy"] = "camera=(), microphone=(), geolocation=(), payment=()";
                headers["Cross-Origin-Opener-Policy"] = "same-origin";
                return Task.CompletedTask;
            }, ctx);
            return next(ctx);
        });
        return app;
    }

    /// <summary>Which budget a request spends, per client address; requests outside the guarded doors spend none.</summary>
    private static RateLimitPartition<string> Partition(HttpContext ctx)
    {
        var o = ctx.RequestServices.GetRequiredService<IOptionsMonitor<RateLimitOptions>>().CurrentValue;
        var door = o.Enabled ? DoorOf(ctx.Request) : null;
        if (door is null)
        {
            return RateLimitPartition.GetNoLimiter("open");
        }
        var permits = door switch
        {
            "sign-in" => o.SignInPerMinute,
            "link" => o.LinkPerMinute,
            "expert-api" => o.ExpertApiPerMinute,
            _ => o.ApiKeyPerMinute,
        };
        var address = ctx.Connection.RemoteIpAddress?.ToString() ?? "unknown";
        return RateLimitPartition.GetFixedWindowLimiter($"{door}|{address}", _ => new FixedWindowRateLimiterOptions
        {
            PermitLimit = permits,
            Window = TimeSpan.FromMinutes(1),
            QueueLimit = 0,
        });
    }

    private static string? DoorOf(HttpRequest request)
    {
        var path = request.Path;
        if (HttpMethods.IsPost(request.Method) && path.StartsWithSegments("/Account/Login", StringComparison.OrdinalIgnoreCase))
        {
            return "sign-in";
        }
        if (path.StartsWithSegments("/e", StringComparison.OrdinalIgnoreCase))
        {
            return "link";
        }
        if (path.StartsWithSegments("/api/expert", StringComparison.OrdinalIgnoreCase))
        {
            return "expert-api";
        }
        return request.Headers.Authorization.ToString().StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase) ? "api-key" : null;
    }

    private static async ValueTask RejectedAsync(OnRejectedContext context, CancellationToken cancellationToken)
    {
        var response = context.HttpContext.Response;
        var retryAfter = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var wait) ? wait : TimeSpan.FromMinutes(1);
        var seconds = Math.Max(1, (int)Math.Ceiling(retryAfter.TotalSeconds));
        response.StatusCode = StatusCodes.Status429TooManyRequests;
        response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
        await Results.Problem(
                title: "Too many requests",
                detail: $"Too many requests from this address; try again in {seconds} seconds.",
                statusCode: StatusCodes.Status429TooManyRequests)
            .ExecuteAsync(context.HttpContext);
    }
}
