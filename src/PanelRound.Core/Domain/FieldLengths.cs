namespace PanelRound.Core.Domain;

/// <summary>
/// The length limits of the product's text fields, in characters: the one place that the
/// database configuration (column sizes) and the validation of forms, the API and imports read.
/// </summary>
public static class FieldLengths
{
    /// <summary>An indicator's key (<see cref="IndicatorKeys"/>).</summary>
    public const int IndicatorKey = 100;

    /// <summary>An indicator's name, a panel's title and a question's label.</summary>
    public const int Title = 300;

    /// <summary>An indicator's unit label, e.g. <c>EUR/m²</c>.</summary>
    public const int UnitLabel = 50;

    /// <summary>An indicator's description and a question's help text.</summary>
    public const int Description = 4000;

    /// <summary>A period's text form, <c>2027</c> or <c>2027Q3</c>.</summary>
    public const int Period = 10;

    /// <summary>An observation's source note.</summary>
    public const int Source = 500;

    /// <summary>A panel's brief, in Markdown.</summary>
    public const int Brief = 20000;

    /// <summary>A panel's or a question's comma-separated target periods.</summary>
    public const int TargetPeriods = 500;

    /// <summary>A key from a firm's own records: a panel's or an expert's external key.</summary>
    public const int ExternalKey = 200;

    /// <summary>An expert's name, an API key's name, a staff member's display name.</summary>
    public const int Name = 200;

    /// <summary>A time zone's IANA name, e.g. <c>Europe/Lisbon</c>.</summary>
    public const int TimeZone = 64;

    /// <summary>An email address.</summary>
    public const int Email = 256;

    /// <summary>Who made a change (a staff email, an API key's name or a system actor such as <c>system:deadline</c>).</summary>
    public const int Actor = Email;

    /// <summary>An expert's affiliation.</summary>
    public const int Affiliation = 200;

    /// <summary>An expert's expertise.</summary>
    public const int Expertise = 500;

    /// <summary>An expert's declared interests.</summary>
    public const int DeclaredInterests = 2000;

    /// <summary>A panel code such as <c>KX7-Q2M</c>.</summary>
    public const int PanelCode = 20;

    /// <summary>A SHA-256 hash in hex (personal links, API keys).</summary>
    public const int Hash = 64;

    /// <summary>The rationale an expert gives with an answer: at most 2,000 characters are accepted.</summary>
    /// <remarks>
    /// Implementation note: the database column is larger (<see cref="RationaleColumn"/>); it was
    /// sized before the limit was chosen and is kept, so that no migration is needed. Every input
    /// path (form, API) accepts at most this many characters.
    /// </remarks>
    public const int Rationale = 2000;

    /// <summary>The size of the rationale column: twice <see cref="Rationale"/>, room that validation never uses.</summary>
    public const int RationaleColumn = 2 * Rationale;

    /// <summary>How a consensus value was computed (its method's name).</summary>
    public const int ConsensusMethod = 100;

    /// <summary>A benchmark method's key, e.g. <c>seasonal-naive</c>.</summary>
    public const int BenchmarkKey = 20;
}
