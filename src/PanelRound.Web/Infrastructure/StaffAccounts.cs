using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Infrastructure;

/// <summary>Staff accounts and roles.</summary>
public static class StaffAccounts
{
    public static async Task EnsureRolesAsync(IServiceProvider services)
    {
        var roles = services.GetRequiredService<RoleManager<IdentityRole>>();
        foreach (var role in Roles.All)
        {
            if (!await roles.RoleExistsAsync(role))
            {
                await roles.CreateAsync(new IdentityRole(role));
            }
        }
    }

    public static async Task<IdentityResult> CreateAsync(UserManager<StaffUser> users, string email, string displayName, string password, IEnumerable<string> roles)
    {
        var user = new StaffUser
        {
            UserName = email,
            Email = email,
            EmailConfirmed = true,
            DisplayName = displayName,
            CreatedAt = DateTime.UtcNow,
        };
        var created = await users.CreateAsync(user, password);
        return created.Succeeded ? await users.AddToRolesAsync(user, roles) : created;
    }
}

/// <summary>Staff API keys: created once, shown once, stored as a hash.</summary>
public static class ApiKeys
{
    public static async Task<string> CreateAsync(PanelRoundDbContext db, string name, string role, string actor)
    {
        var key = Secrets.NewToken(ApiKeyAuthenticationHandler.KeyPrefix);
        var entity = new ApiKey
        {
            Name = name.Trim(),
            Role = role,
            KeyHash = Secrets.Hash(key),
            Prefix = key[..10],
            CreatedAt = DateTime.UtcNow,
            CreatedBy = actor,
        };
        db.ApiKeys.Add(entity);
        await db.SaveChangesAsync();
        Audit.Record(db, actor, "api-key.created", "ApiKey", entity.Id, details: new { entity.Name, entity.Role, entity.Prefix });
        await db.SaveChangesAsync();
        return key;
    }

    public static async Task<bool> RevokeAsync(PanelRoundDbContext db, int id, string actor)
    {
        var key = await db.ApiKeys.FirstOrDefaultAsync(k => k.Id == id && k.RevokedAt == null);
        if (key is null)
        {
            return false;
        }
        key.RevokedAt = DateTime.UtcNow;
        Audit.Record(db, actor, "api-key.revoked", "ApiKey", key.Id, details: new { key.Name });
        await db.SaveChangesAsync();
        return true;
    }
}
