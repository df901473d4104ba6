using System.Security.Claims;
using System.Text.Encodings.Web;
using Microsoft.AspNetCore.Authentication;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
using PanelRound.Data;

namespace PanelRound.Web.Infrastructure;

/// <summary>Staff API calls with <c>Authorization: Bearer &lt;key&gt;</c>; keys are stored as SHA-256 hashes.</summary>
public sealed class ApiKeyAuthenticationHandler(
    IOptionsMonitor<AuthenticationSchemeOptions> options, ILoggerFactory logger, UrlEncoder encoder, PanelRoundDbContext db)
    : AuthenticationHandler<AuthenticationSchemeOptions>(options, logger, encoder)
{
    public const string SchemeName = "ApiKey";
    public const string KeyPrefix = "prk_";

    protected override async Task<AuthenticateResult> HandleAuthenticateAsync()
    {
        var header = Request.Headers.Authorization.ToString();
        if (!header.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase))
        {
            return AuthenticateResult.NoResult();
        }
        var key = header["Bearer ".Length..].Trim();
        if (!key.StartsWith(KeyPrefix, StringComparison.Ordinal))
        {
            return AuthenticateResult.NoResult();
        }
        var hash = Secrets.Hash(key);
        var found = await db.ApiKeys.AsNoTracking().FirstOrDefaultAsync(k => k.KeyHash == hash && k.RevokedAt == null, Context.RequestAborted);
        if (found is null)
        {
            return AuthenticateResult.Fail("Unknown or revoked API key.");
        }
        var identity = new ClaimsIdentity(
        [
            new Claim(ClaimTypes.NameIdentifier, "api-key:" + found.Id),
            new Claim(ClaimTypes.Name, "api-key:" + found.Name),
            new Claim(ClaimTypes.Role, found.Role),
        ], SchemeName);
        return AuthenticateResult.Success(new AuthenticationTicket(new ClaimsPrincipal(identity), SchemeName));
    }
}
