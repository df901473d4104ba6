namespace PanelRound.Data.Entities;

/// <summary>One forecasting exercise.</summary>
public class Panel
{
    public int Id { get; set; }

    public string Title { get; set; } = "";

    /// <summary>The brief, in Markdown; rendered through a sanitiser.</summary>
    public string Brief { get; set; } = "";

    /// <summary>The panel's start: the reference series is the observations before it.</summary>
    public DateOnly StartsOn { get; set; }

    /// <summary>Target periods, comma-separated text forms, e.g. <c>2027,2028,2029,2030,2031</c>.</summary>
    public string TargetPeriods { get; set; } = "";

    public PanelState State { get; set; }

    public PanelSettings Settings { get; set; } = new();

    public DateTime CreatedAt { get; set; }

    public string? CreatedBy { get; set; }

    public DateTime? ConcludedAt { get; set; }

    /// <summary>
    /// The facilitator's time zone (an IANA name the server knows, e.g. <c>Europe/Lisbon</c>):
    /// invitations and reminders give each deadline in UTC and in this zone.
    /// </summary>
    public string TimeZone { get; set; } = "UTC";

    /// <summary>Whom experts contact about the panel (a name or team), shown in invitations and on the expert's page.</summary>
    public string? ContactName { get; set; }

    /// <summary>The contact's email address.</summary>
    public string? ContactEmail { get; set; }

    /// <summary>An external key when the panel was imported from a firm's records.</summary>
    public string? ExternalKey { get; set; }

    /// <summary>Optimistic concurrency token, changed on every state change.</summary>
    public Guid Version { get; set; }

    public List<Question> Questions { get; set; } = [];

    public List<Round> Rounds { get; set; } = [];

    public List<PanelMembership> Memberships { get; set; } = [];
}

/// <summary>A panel's statistical and procedural settings (stored with the panel).</summary>
public class PanelSettings
{
    public OutlierRuleSetting OutlierRule { get; set; } = OutlierRuleSetting.TukeyFences;

    /// <summary>Share trimmed from each tail for the trimmed mean and the symmetric-trim rule.</summary>
    public double TrimFraction { get; set; } = 0.10;

    /// <summary>Consensus when the relative IQR is at or below this (0.10 = 10%).</summary>
    public double ConsensusThreshold { get; set; } = 0.10;

    /// <summary>An answer "moved" when it changed by more than this share (0.15 = 15%).</summary>
    public double StabilityThreshold { get; set; } = 0.15;

    public int RoundCap { get; set; } = 3;

    /// <summary>No distribution is shown for fewer answers than this; never below 3.</summary>
    public int MinimumGroupSize { get; set; } = 3;

    public bool ShowRationales { get; set; } = true;

    /// <summary>An answer outside the previous round's retained range must carry a rationale.</summary>
    public bool OutliersMustJustify { get; set; } = true;

    public ConsensusWeighting Weighting { get; set; } = ConsensusWeighting.Equal;

    /// <summary>Show one statistical benchmark on the expert's chart; off by default, because a shown number anchors answers.</summary>
    public bool ShowBenchmarkToExperts { get; set; }

    /// <summary>The benchmark shown to experts when <see cref="ShowBenchmarkToExperts"/> is on, by key (<c>naive</c>, <c>drift</c>, <c>mean</c>, <c>ses</c>, <c>holt</c>, <c>damped</c>, <c>seasonal-naive</c>).</summary>
    public string ExpertBenchmark { get; set; } = "naive";

    /// <summary>k of the benchmark "mean of the last k observations".</summary>
    public int BenchmarkWindow { get; set; } = 3;

    /// <summary>A relation between three questions is flagged where the given and implied values differ by more than this share (0.05 = 5%).</summary>
    public double RelationTolerance { get; set; } = 0.05;

    /// <summary>The calibration cut-off α of calibration-question weights (0 to 1); null chooses it to maximise the combination's score.</summary>
    public double? CalibrationCutoff { get; set; }

    /// <summary>The overshoot of the intrinsic range of calibration questions on each side (0.10 = 10%).</summary>
    public double CalibrationOvershoot { get; set; } = 0.10;

    /// <summary>Calibration questions are scored on round 1's answers instead of the final round's.</summary>
    public bool CalibrationUsesFirstRound { get; set; }
}

/// <summary>A panel's ask about one indicator.</summary>
public class Question
{
    public int Id { get; set; }

    public int PanelId { get; set; }

    public Panel? Panel { get; set; }

    public int IndicatorId { get; set; }

    public Indicator? Indicator { get; set; }

    public int Order { get; set; }

    public string Label { get; set; } = "";

    public string? HelpText { get; set; }

    public ResponseFormat Format { get; set; }

    /// <summary>Answers outside the hard bounds are refused.</summary>
    public double? HardMin { get; set; }

    public double? HardMax { get; set; }

    /// <summary>Answers outside the plausible range ask "are you sure?".</summary>
    public double? PlausibleMin { get; set; }

    public double? PlausibleMax { get; set; }

    /// <summary>Target periods, comma-separated; by default the panel's.</summary>
    public string TargetPeriods { get; set; } = "";

    /// <summary>
    /// A calibration question: a Range question about one period whose true value the facilitator
    /// knows or will know soon; it scores the experts and takes no part in the consensus. Experts
    /// are never told.
    /// </summary>
    public bool IsCalibration { get; set; }

    /// <summary>A calibration question's true value, once recorded.</summary>
    public double? TrueValue { get; set; }

    public DateTime? TrueValueRecordedAt { get; set; }

    /// <summary>The information score of this question uses a log-uniform background (for quantities spanning orders of magnitude).</summary>
    public bool LogScale { get; set; }
}
