using Microsoft.AspNetCore.Identity;

namespace PanelRound.Data.Entities;

/// <summary>A staff account (facilitator, reviewer, administrator).</summary>
public class StaffUser : IdentityUser
{
    public string DisplayName { get; set; } = "";

    public DateTime CreatedAt { get; set; }
}

/// <summary>The staff roles.</summary>
public static class Roles
{
    public const string Facilitator = nameof(Facilitator);
    public const string Reviewer = nameof(Reviewer);
    public const string Administrator = nameof(Administrator);

    public static readonly IReadOnlyList<string> All = [Facilitator, Reviewer, Administrator];
}

/// <summary>A key for staff API calls; only its hash is stored.</summary>
public class ApiKey
{
    public int Id { get; set; }

    public string Name { get; set; } = "";

    /// <summary>SHA-256 of the key, hex.</summary>
    public string KeyHash { get; set; } = "";

    /// <summary>The first characters of the key, to recognise it in lists.</summary>
    public string Prefix { get; set; } = "";

    public string Role { get; set; } = "";

    public DateTime CreatedAt { get; set; }

    public string? CreatedBy { get; set; }

    public DateTime? RevokedAt { get; set; }

    public DateTime? LastUsedAt { get; set; }
}

/// <summary>One state change, for the audit trail.</summary>
public class AuditEvent
{
    public long Id { get; set; }

    public DateTime At { get; set; }

    /// <summary>Who: a staff email, <c>api-key:NAME</c>, <c>expert:PANELCODE</c> or <c>system</c>.</summary>
    public string Actor { get; set; } = "";

    /// <summary>What, e.g. <c>round.closed</c>.</summary>
    public string Action { get; set; } = "";

    public string EntityType { get; set; } = "";

    public string EntityId { get; set; } = "";

    public int? PanelId { get; set; }

    /// <summary>Details as JSON.</summary>
    public string? Details { get; set; }
}

/// <summary>A lease that lets one of several web instances run a background job at a time.</summary>
public class JobLease
{
    public string Name { get; set; } = "";

    public string Holder { get; set; } = "";

    public DateTime ExpiresAt { get; set; }
}
