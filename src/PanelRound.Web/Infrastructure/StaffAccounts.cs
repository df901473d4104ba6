using System.Collections.Concurrent;
using System.Security.Cryptography;
using Microsoft.AspNetCore.Identity;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.Options;
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

    /// <summary>Creates a staff account; <paramref name="createdAt"/> defaults to now.</summary>
    public static async Task<IdentityResult> CreateAsync(
        UserManager<StaffUser> users, string email, string displayName, string password, IEnumerable<string> roles, DateTime? createdAt = null)
    {
        var user = new StaffUser
        {
            UserName = email,
            Email = email,
            EmailConfirmed = true,
            DisplayName = displayName,
            CreatedAt = createdAt ?? DateTime.UtcNow,
        };
        var created = await users.CreateAsync(user, password);
        return created.Succeeded ? await users.AddToRolesAsync(user, roles) : created;
    }
}

/// <summary>
/// Staff sign-in by email and password: the same work and the same answer whether or not the
/// address has an account, and no lock-out.
/// </summary>
/// <remarks>
/// <para>An unknown address (or an account without a password) is checked against a hash of a
/// random password made by the app's own <see cref="IPasswordHasher{TUser}"/>, so that it costs
/// one verification, as a known address does, and answers the same message.</para>
/// <para>Implementation note (lock-out policy): failed attempts never lock an account, because
/// anyone who knows a staff member's address could then lock them out. Identity's lock-out is off
/// (<c>Lockout.AllowedForNewUsers = false</c>, and sign-in never counts towards it). Instead
/// <see cref="SignInThrottle"/> slows failures: after a few failed attempts on one address, each
/// further failure on it answers only after a delay that doubles up to a cap. Known and unknown
/// addresses are slowed alike, so the delay tells nothing about which exist; the right password
/// is never delayed nor refused. The delay slows one guesser working in sequence; bounding what a
/// client sends in parallel is the rate limiter's job, not this class's.</para>
/// </remarks>
public static class StaffSignIn
{
    /// <summary>The one answer to a failed sign-in, whatever failed.</summary>
    public const string FailedMessage = "Email or password is wrong.";

    private static readonly StaffUser Nobody = new() { UserName = "nobody", Email = "nobody" };

    private static string? _unknownAccountHash;

    /// <summary>Signs in with the staff cookie when the password is right; true on success.</summary>
    public static async Task<bool> SignInStaffAsync(
        this SignInManager<StaffUser> signIn, SignInThrottle throttle, string email, string password, CancellationToken cancellationToken)
    {
        var users = signIn.UserManager;
        var address = users.NormalizeName(email.Trim()) ?? "";
        var user = await users.FindByNameAsync(email.Trim());
        bool succeeded;
        if (user?.PasswordHash is null)
        {
            var hasher = users.PasswordHasher;
            var hash = LazyInitializer.EnsureInitialized(ref _unknownAccountHash, () => hasher.HashPassword(Nobody, RandomNumberGenerator.GetHexString(32)));
            hasher.VerifyHashedPassword(Nobody, hash, password);
            succeeded = false;
        }
        else
        {
            succeeded = (await signIn.PasswordSignInAsync(user, password, isPersistent: false, lockoutOnFailure: false)).Succeeded;
        }
        if (succeeded)
        {
            throttle.Succeeded(address);
            return true;
        }
        await throttle.FailedAsync(address, cancellationToken);
        return false;
    }
}

/// <summary>The <c>StaffSignIn</c> configuration section: how failed sign-ins on one address are slowed.</summary>
public sealed class StaffSignInOptions
{
    public const string Section = "StaffSignIn";

    /// <summary>Failures of one address, within <see cref="Window"/>, that answer without delay.</summary>
    public int FreeFailures { get; set; } = 5;

    /// <summary>The delay after the first failure beyond the free ones; each further failure doubles it.</summary>
    public TimeSpan FirstDelay { get; set; } = TimeSpan.FromMilliseconds(500);

    /// <summary>The longest delay.</summary>
    public TimeSpan MaxDelay { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>An address's count starts again when it has had no failure for this long.</summary>
    public TimeSpan Window { get; set; } = TimeSpan.FromMinutes(15);

    public bool IsValid() =>
        FreeFailures >= 0 && FirstDelay >= TimeSpan.Zero && MaxDelay >= FirstDelay && MaxDelay <= TimeSpan.FromMinutes(1) && Window > TimeSpan.Zero;
}

/// <summary>
/// Counts recent failed sign-ins per normalised address (whether or not it has an account) and
/// delays the answer to failures beyond the free ones; see <see cref="StaffSignIn"/>.
/// </summary>
/// <remarks>
/// Implementation note: the counts live in this instance's memory. They are a brake, not a record:
/// an instance that has not seen an address's failures simply does not slow it yet, and no instance
/// needs another's counts to be correct. At most <see cref="MaxTracked"/> addresses are followed;
/// when that many have recent failures, failures on any further address get the longest delay.
/// </remarks>
public sealed class SignInThrottle(TimeProvider clock, IOptions<StaffSignInOptions> options)
{
    public const int MaxTracked = 10_000;

    private readonly ConcurrentDictionary<string, (int Count, DateTimeOffset Last)> _failures = new(StringComparer.Ordinal);

    /// <summary>Records a failure of the address and waits the delay it has earned.</summary>
    public Task FailedAsync(string address, CancellationToken cancellationToken)
    {
        var delay = RecordFailure(address);
        return delay > TimeSpan.Zero ? Task.Delay(delay, clock, cancellationToken) : Task.CompletedTask;
    }

    /// <summary>The right password: the address's count starts again.</summary>
    public void Succeeded(string address) => _failures.TryRemove(address, out _);

    private TimeSpan RecordFailure(string address)
    {
        var o = options.Value;
        var now = clock.GetUtcNow();
        if (!_failures.ContainsKey(address) && _failures.Count >= MaxTracked)
        {
            foreach (var (key, f) in _failures)
            {
                if (now - f.Last > o.Window)
                {
                    _failures.TryRemove(key, out _);
                }
            }
            if (_failures.Count >= MaxTracked)
            {
                return o.MaxDelay;
            }
        }
        var count = _failures.AddOrUpdate(address, _ => (1, now), (_, f) => (now - f.Last > o.Window ? 1 : f.Count + 1, now)).Count;
        if (count <= o.FreeFailures)
        {
            return TimeSpan.Zero;
        }
        var delay = o.FirstDelay * Math.Pow(2, Math.Min(count - o.FreeFailures - 1, 20));
        return delay < o.MaxDelay ? delay : o.MaxDelay;
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
