using Microsoft.AspNetCore.Authentication;
using Microsoft.AspNetCore.Authentication.Cookies;
using Microsoft.AspNetCore.DataProtection;
using Microsoft.AspNetCore.Identity;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Infrastructure;

public static class AuthSetup
{
    /// <summary>Chooses between the staff cookie and an API key by the request's Authorization header.</summary>
    public const string StaffScheme = "Staff";

    /// <summary>The cookie an expert's personal link is exchanged for; it names one membership.</summary>
    public const string ExpertScheme = "Expert";

    public const string FacilitatorPolicy = "Facilitator";
    public const string ReviewerPolicy = "Reviewer";
    public const string AdministratorPolicy = "Administrator";
    public const string StaffPolicy = "Staff";

    public static IHostApplicationBuilder AddPanelRoundAuth(this IHostApplicationBuilder builder)
    {
        var services = builder.Services;
        // The key ring lives in the database, so every instance reads the cookies of the others.
        var dataProtection = services.AddDataProtection().SetApplicationName("PanelRound").PersistKeysToDbContext<PanelRoundDbContext>();
        // At rest the keys are encrypted with a certificate when one is configured (recommended in production;
        // without it ASP.NET Core warns at start-up that keys are stored unencrypted).
        var certificatePath = builder.Configuration["DataProtection:CertificatePath"];
        if (!string.IsNullOrWhiteSpace(certificatePath))
        {
            dataProtection.ProtectKeysWithCertificate(System.Security.Cryptography.X509Certificates.X509CertificateLoader.LoadPkcs12FromFile(
                certificatePath, builder.Configuration["DataProtection:CertificatePassword"], System.Security.Cryptography.X509Certificates.X509KeyStorageFlags.EphemeralKeySet));
        }

        services.AddIdentity<StaffUser, IdentityRole>(o =>
            {
                o.Password.RequiredLength = 12;
                // Length over composition rules (NIST SP 800-63B, section 5.1.1).
                o.Password.RequireNonAlphanumeric = false;
                o.Password.RequireUppercase = false;
                o.Password.RequireLowercase = false;
                o.Password.RequireDigit = false;
                o.User.RequireUniqueEmail = true;
                // No lock-out: a stranger who knows the address could lock its owner out. Failures are slowed instead (StaffSignIn).
                o.Lockout.AllowedForNewUsers = false;
            })
            .AddEntityFrameworkStores<PanelRoundDbContext>()
            .AddDefaultTokenProviders();
        services.AddOptions<StaffSignInOptions>().BindConfiguration(StaffSignInOptions.Section)
            .Validate(o => o.IsValid(), "StaffSignIn: FreeFailures >= 0, 0 <= FirstDelay <= MaxDelay <= 1 minute, Window > 0.")
            .ValidateOnStart();
        services.AddSingleton<SignInThrottle>();

        services.ConfigureApplicationCookie(o =>
        {
            o.LoginPath = "/Account/Login";
            o.LogoutPath = "/Account/Logout";
            o.AccessDeniedPath = "/Account/AccessDenied";
            o.Cookie.Name = "panelround.staff";
            o.Cookie.HttpOnly = true;
            o.Cookie.SameSite = SameSiteMode.Lax;
            o.SlidingExpiration = true;
            o.ExpireTimeSpan = TimeSpan.FromHours(10);
            // API callers get status codes, not a redirect to the sign-in page.
            o.Events.OnRedirectToLogin = ctx => RedirectOrStatus(ctx, StatusCodes.Status401Unauthorized);
            o.Events.OnRedirectToAccessDenied = ctx => RedirectOrStatus(ctx, StatusCodes.Status403Forbidden);
        });

        services.AddAuthentication(o =>
            {
                o.DefaultScheme = StaffScheme;
                o.DefaultChallengeScheme = StaffScheme;
            })
            .AddPolicyScheme(StaffScheme, "Staff cookie or API key", o =>
                o.ForwardDefaultSelector = ctx =>
                    ctx.Request.Headers.Authorization.ToString().StartsWith("Bearer " + ApiKeyAuthenticationHandler.KeyPrefix, StringComparison.Ordinal)
                        ? ApiKeyAuthenticationHandler.SchemeName
                        : IdentityConstants.ApplicationScheme)
            .AddScheme<AuthenticationSchemeOptions, ApiKeyAuthenticationHandler>(ApiKeyAuthenticationHandler.SchemeName, null)
            .AddCookie(ExpertScheme, o =>
            {
                o.Cookie.Name = "panelround.expert";
                o.Cookie.HttpOnly = true;
                o.Cookie.SameSite = SameSiteMode.Lax;
                o.ExpireTimeSpan = TimeSpan.FromDays(30);
                o.SlidingExpiration = true;
                o.LoginPath = "/expert/link-needed";
                o.AccessDeniedPath = "/expert/link-needed";
                o.Events.OnRedirectToLogin = ctx => RedirectOrStatus(ctx, StatusCodes.Status401Unauthorized);
            });

        services.AddAuthorizationBuilder()
            .AddPolicy(StaffPolicy, p => p.AddAuthenticationSchemes(StaffScheme).RequireRole(Roles.All.ToArray()))
            .AddPolicy(FacilitatorPolicy, p => p.AddAuthenticationSchemes(StaffScheme).RequireRole(Roles.Facilitator, Roles.Administrator))
            .AddPolicy(ReviewerPolicy, p => p.AddAuthenticationSchemes(StaffScheme).RequireRole(Roles.Reviewer, Roles.Facilitator, Roles.Administrator))
            .AddPolicy(AdministratorPolicy, p => p.AddAuthenticationSchemes(StaffScheme).RequireRole(Roles.Administrator));
        return builder;
    }

    private static Task RedirectOrStatus(RedirectContext<CookieAuthenticationOptions> ctx, int status)
    {
        if (ctx.Request.Path.StartsWithSegments("/api"))
        {
            ctx.Response.StatusCode = status;
            return Task.CompletedTask;
        }
        ctx.Response.Redirect(ctx.RedirectUri);
        return Task.CompletedTask;
    }
}
