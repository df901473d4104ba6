namespace PanelRound.Data.Entities;

/// <summary>How an expert answers a question.</summary>
public enum ResponseFormat
{
    /// <summary>One value per target period.</summary>
    Point = 0,

    /// <summary>P10 / P50 / P90 per target period.</summary>
    Range = 1,
}

/// <summary>The life of a panel.</summary>
public enum PanelState
{
    /// <summary>Being set up; editable.</summary>
    Draft = 0,

    /// <summary>At least one round has opened.</summary>
    Running = 1,

    /// <summary>The consensus is published; read-only.</summary>
    Concluded = 2,
}

/// <summary>The life of a round.</summary>
public enum RoundState
{
    /// <summary>Experts may answer.</summary>
    Open = 0,

    /// <summary>Closed; its feedback is frozen.</summary>
    Closed = 1,
}

/// <summary>The state of an expert's place on a panel.</summary>
public enum MembershipState
{
    /// <summary>Link issued, not opened yet.</summary>
    Invited = 0,

    /// <summary>Link opened at least once.</summary>
    Active = 1,

    /// <summary>Link revoked: the token no longer opens anything.</summary>
    Revoked = 2,
}

/// <summary>The outlier rule of a panel's round feedback.</summary>
public enum OutlierRuleSetting
{
    /// <summary>Cut the same share from each tail.</summary>
    SymmetricTrim = 0,

    /// <summary>Tukey's fences at k times the IQR beyond the quartiles.</summary>
    TukeyFences = 1,

    /// <summary>Modified z-score (median absolute deviation) above a threshold.</summary>
    ModifiedZScore = 2,
}

/// <summary>How a panel's consensus weighs its experts.</summary>
public enum ConsensusWeighting
{
    /// <summary>Every expert counts the same.</summary>
    Equal = 0,

    /// <summary>Weights from each expert's scored track record.</summary>
    TrackRecord = 1,

    /// <summary>Performance weights from the panel's calibration questions (calibration × information).</summary>
    Calibration = 2,
}

/// <summary>The shape of a relation between three questions.</summary>
public enum RelationShape
{
    /// <summary>result = first × second (income = value × yield).</summary>
    Product = 0,

    /// <summary>result = first + second (price = land + construction cost).</summary>
    Sum = 1,
}
