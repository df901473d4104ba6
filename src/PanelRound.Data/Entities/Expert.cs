namespace PanelRound.Data.Entities;

/// <summary>A person on the firm's roster, reused across panels. Experts have no account.</summary>
public class Expert
{
    public int Id { get; set; }

    public string Name { get; set; } = "";

    public string Email { get; set; } = "";

    public string? Affiliation { get; set; }

    public string? Expertise { get; set; }

    public string? DeclaredInterests { get; set; }

    /// <summary>A key from the firm's own records (imports match experts by it).</summary>
    public string? ExternalKey { get; set; }

    public DateTime CreatedAt { get; set; }

    public List<PanelMembership> Memberships { get; set; } = [];
}

/// <summary>An expert's place on one panel: a pseudonym and a personal link.</summary>
public class PanelMembership
{
    public int Id { get; set; }

    public int PanelId { get; set; }

    public Panel? Panel { get; set; }

    public int ExpertId { get; set; }

    public Expert? Expert { get; set; }

    /// <summary>The per-panel pseudonym (random, never reused across panels).</summary>
    public string PanelCode { get; set; } = "";

    /// <summary>SHA-256 of the personal link's token, hex; the token itself is never stored.</summary>
    public string TokenHash { get; set; } = "";

    public DateTime TokenIssuedAt { get; set; }

    public MembershipState State { get; set; }

    public DateTime CreatedAt { get; set; }

    public DateTime? LastSeenAt { get; set; }

    /// <summary>When the link was revoked: the membership's answers stop counting in rounds open then.</summary>
    public DateTime? RevokedAt { get; set; }
}
