namespace PanelRound.Data.Entities;

/// <summary>A window in which experts answer.</summary>
public class Round
{
    public int Id { get; set; }

    public int PanelId { get; set; }

    public Panel? Panel { get; set; }

    public int Number { get; set; }

    public RoundState State { get; set; }

    public DateTime OpensAt { get; set; }

    /// <summary>The deadline; the round closes itself then.</summary>
    public DateTime ClosesAt { get; set; }

    public DateTime? ClosedAt { get; set; }

    public string? ClosedBy { get; set; }

    /// <summary>
    /// Concurrency token: the close changes it. Submissions lock the row before they save (shared
    /// on PostgreSQL, a no-op update on SQLite), so a submission can never be acknowledged into a
    /// round whose close has already read its answers.
    /// </summary>
    public Guid Version { get; set; }

    public List<FrozenFeedback> Feedback { get; set; } = [];
}

/// <summary>
/// The frozen group statistics of one question-period in a closed round (the round feedback of the
/// design's vocabulary, as stored; the statistics themselves are computed by the core's <c>RoundFeedback</c>).
/// </summary>
public class FrozenFeedback
{
    public long Id { get; set; }

    public int RoundId { get; set; }

    public Round? Round { get; set; }

    public int QuestionId { get; set; }

    public string Period { get; set; } = "";

    public int N { get; set; }

    /// <summary>True when fewer answers than the minimum group size arrived: nothing is shown.</summary>
    public bool Withheld { get; set; }

    /// <summary>The full statistics as JSON (the shape of the web layer's feedback view).</summary>
    public string StatisticsJson { get; set; } = "{}";

    /// <summary>Unattributed rationales, shuffled, as a JSON array of strings.</summary>
    public string RationalesJson { get; set; } = "[]";
}

/// <summary>
/// One expert's answer to one question-period in one round. Append-only: a revision is a new
/// row, and the latest submitted row in the round counts.
/// </summary>
public class Estimate
{
    public long Id { get; set; }

    public int RoundId { get; set; }

    public int MembershipId { get; set; }

    public PanelMembership? Membership { get; set; }

    public int QuestionId { get; set; }

    public string Period { get; set; } = "";

    public double? Value { get; set; }

    public double? P10 { get; set; }

    public double? P50 { get; set; }

    public double? P90 { get; set; }

    /// <summary>1 (low) to 5 (high).</summary>
    public int? Confidence { get; set; }

    public string? Rationale { get; set; }

    /// <summary>A saved draft does not count until submitted.</summary>
    public bool IsDraft { get; set; }

    public DateTime CreatedAt { get; set; }
}

/// <summary>The panel's published forecast for one question-period.</summary>
public class ConsensusEntry
{
    public long Id { get; set; }

    public int PanelId { get; set; }

    public int QuestionId { get; set; }

    public string Period { get; set; } = "";

    public double Value { get; set; }

    public double Low { get; set; }

    public double High { get; set; }

    public int N { get; set; }

    public string Method { get; set; } = "";

    public DateTime PublishedAt { get; set; }
}

/// <summary>
/// A submission's idempotency key (the <c>Idempotency-Key</c> header of the expert API, or the
/// expert page's form key), kept with the receipt it produced, so that a client retrying after a
/// timeout or a crash gets the same receipt back and adds no second revision.
/// </summary>
public class SubmissionKey
{
    public long Id { get; set; }

    public int MembershipId { get; set; }

    /// <summary>SHA-256 of the key as sent, in lower-case hex (the key itself is not kept).</summary>
    public string KeyHash { get; set; } = "";

    /// <summary>SHA-256 of the submission's canonical JSON: a key reused for a different body is refused.</summary>
    public string RequestHash { get; set; } = "";

    public int RoundNumber { get; set; }

    public int Saved { get; set; }

    public bool IsDraft { get; set; }

    /// <summary>The receipt's warnings, a JSON array of strings.</summary>
    public string WarningsJson { get; set; } = "[]";

    public DateTime CreatedAt { get; set; }
}
