using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;
using System.Text.RegularExpressions;
using PanelRound.Core.Domain;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Demo;

/// <summary>The <c>Demo</c> configuration section.</summary>
public sealed class DemoOptions
{
    public const string Section = "Demo";

    /// <summary><c>Demo:Enabled</c>: load the demo scenario into an empty database and print its sign-ins.</summary>
    public bool Enabled { get; set; }

    /// <summary><c>Demo:Folder</c>: where the demo files are; by default the repository's demo-data folder.</summary>
    public string? Folder { get; set; }
}

public sealed record DemoIndicator(string Key, string Name, string Unit, int Decimals, string Description);

public sealed record DemoObservation(string Indicator, string Period, double Value, string Source);

public sealed record DemoExpert(string Key, string Name, string Email, string Affiliation, string Expertise, string DeclaredInterests, string Profile);

public sealed record DemoEstimate(string Panel, int Round, string Expert, string Indicator, string Period,
    double? Value, double? P10, double? P50, double? P90, int Confidence, string Rationale, DateTime SubmittedAt);

public sealed record DemoStaff(string Email, string Name, string Role, string Password);

/// <summary>A question of a demo panel; a calibration question has its own period, its true value and maybe a log scale.</summary>
public sealed record DemoQuestion(string Indicator, string Label, string Format, double HardMin, double HardMax,
    double PlausibleMin, double PlausibleMax, string Help, string? CalibrationPeriod = null, double? TrueValue = null, bool? LogScale = null);

public sealed record DemoMember(string Expert, string PanelCode, string Token);

public sealed record DemoRound(int Number, DateTime OpensAt, DateTime ClosesAt, bool Closed);

/// <summary>A term of a demo relation: a question of the panel (by its indicator) with a name and the unit factor.</summary>
public sealed record DemoRelationTerm(string Indicator, string Label, double Factor);

/// <summary>A relation declared on a demo panel: <c>Product</c> (result = first × second) or <c>Sum</c>.</summary>
public sealed record DemoRelation(string Shape, DemoRelationTerm Result, DemoRelationTerm First, DemoRelationTerm Second);

public sealed record DemoPanel(string Key, string Title, string Brief, DateOnly StartsOn, string TargetPeriods,
    bool Concluded, IReadOnlyList<DemoQuestion> Questions, IReadOnlyList<DemoMember> Members, IReadOnlyList<DemoRound> Rounds,
    IReadOnlyList<DemoRelation>? Relations = null);

/// <summary>
/// The demo scenario as files: CSV for the tables a firm would recognise (indicators,
/// observations, experts, estimates), JSON for the panels' structure and the demo staff.
/// The scenario is written for the day <c>AnchorDate</c> and agrees with that day's clock.
/// </summary>
public sealed partial record DemoScenario(
    DateOnly AnchorDate,
    IReadOnlyList<DemoStaff> Staff,
    IReadOnlyList<DemoIndicator> Indicators,
    IReadOnlyList<DemoObservation> Observations,
    IReadOnlyList<DemoExpert> Experts,
    IReadOnlyList<DemoPanel> Panels,
    IReadOnlyList<DemoEstimate> Estimates)
{
    private static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        WriteIndented = true,
        DefaultIgnoreCondition = JsonIgnoreCondition.WhenWritingNull,
    };

    private sealed record Structure(DateOnly AnchorDate, IReadOnlyList<DemoStaff> Staff, IReadOnlyList<DemoPanel> Panels);

    public void Write(string folder)
    {
        Directory.CreateDirectory(folder);
        File.WriteAllText(Path.Combine(folder, "panels.json"), JsonSerializer.Serialize(new Structure(AnchorDate, Staff, Panels), Json) + "\n");
        CsvFiles.WriteFile(Path.Combine(folder, "indicators.csv"), ["key", "name", "unit", "decimals", "description"],
            Indicators.Select(i => (IReadOnlyList<string?>)[i.Key, i.Name, i.Unit, F(i.Decimals), i.Description]));
        CsvFiles.WriteFile(Path.Combine(folder, "observations.csv"), ["indicator", "period", "value", "source"],
            Observations.Select(o => (IReadOnlyList<string?>)[o.Indicator, o.Period, F(o.Value), o.Source]));
        CsvFiles.WriteFile(Path.Combine(folder, "experts.csv"), ["key", "name", "email", "affiliation", "expertise", "declared_interests", "profile"],
            Experts.Select(e => (IReadOnlyList<string?>)[e.Key, e.Name, e.Email, e.Affiliation, e.Expertise, e.DeclaredInterests, e.Profile]));
        CsvFiles.WriteFile(Path.Combine(folder, "estimates.csv"),
            ["panel", "round", "expert", "indicator", "target_period", "value", "p10", "p50", "p90", "confidence", "rationale", "submitted_at"],
            Estimates.Select(e => (IReadOnlyList<string?>)[e.Panel, F(e.Round), e.Expert, e.Indicator, e.Period,
                F(e.Value), F(e.P10), F(e.P50), F(e.P90), F(e.Confidence), e.Rationale, e.SubmittedAt.ToString("yyyy-MM-ddTHH:mm:ssZ", CultureInfo.InvariantCulture)]));
    }

    public static DemoScenario Read(string folder)
    {
        var structure = JsonSerializer.Deserialize<Structure>(File.ReadAllText(Path.Combine(folder, "panels.json")), Json)
            ?? throw new InvalidDataException("panels.json is empty.");
        var indicators = CsvFiles.ReadFile(Path.Combine(folder, "indicators.csv")).Rows
            .Select(r => new DemoIndicator(r["key"]!, r["name"]!, r["unit"]!, int.Parse(r["decimals"]!, CultureInfo.InvariantCulture), r["description"] ?? "")).ToList();
        var observations = CsvFiles.ReadFile(Path.Combine(folder, "observations.csv")).Rows
            .Select(r => new DemoObservation(r["indicator"]!, r["period"]!, D(r["value"])!.Value, r["source"] ?? "")).ToList();
        var experts = CsvFiles.ReadFile(Path.Combine(folder, "experts.csv")).Rows
            .Select(r => new DemoExpert(r["key"]!, r["name"]!, r["email"]!, r["affiliation"] ?? "", r["expertise"] ?? "", r["declared_interests"] ?? "", r["profile"] ?? "")).ToList();
        var estimates = CsvFiles.ReadFile(Path.Combine(folder, "estimates.csv")).Rows
            .Select(r => new DemoEstimate(r["panel"]!, int.Parse(r["round"]!, CultureInfo.InvariantCulture), r["expert"]!, r["indicator"]!, r["target_period"]!,
                D(r["value"]), D(r["p10"]), D(r["p50"]), D(r["p90"]), int.Parse(r["confidence"]!, CultureInfo.InvariantCulture), r["rationale"] ?? "",
                DateTime.Parse(r["submitted_at"]!, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal | DateTimeStyles.AssumeUniversal))).ToList();
        return new DemoScenario(structure.AnchorDate, structure.Staff, indicators, observations, experts, structure.Panels, estimates);
    }

    /// <summary>The scenario moved to the day it is loaded on, so that it agrees with that day's clock.</summary>
    /// <remarks>
    /// <para>Implementation note (shift, not filter): the files agree with the clock of
    /// <see cref="AnchorDate"/>: every observation is of a period that had ended and was known by
    /// then, every closed round had closed, the open round was open. Loaded on another day, the
    /// whole scenario moves by the whole number of years nearest to the distance (periods, dates,
    /// and the years named in titles, briefs and indicator texts), and then the running panel alone
    /// moves by the days that remain (at most half a year either way) so that its open round is
    /// open today. Filtering out what lies in the future instead would leave a running panel about
    /// years long past when loaded late, and drop outcomes the scorecard needs when loaded early.</para>
    /// <para>This holds on any day as long as the files keep half a year of margin on each side of
    /// the anchor: past panels concluded and the last observation known more than half a year
    /// before it, the running panel started more than half a year after the last observed period
    /// ended, and its first target period ending more than half a year after the anchor.</para>
    /// </remarks>
    public DemoScenario AsOf(DateTime utcNow)
    {
        var today = DateOnly.FromDateTime(utcNow);
        var years = (int)Math.Round((today.DayNumber - AnchorDate.DayNumber) / 365.2425, MidpointRounding.AwayFromZero);
        var days = today.DayNumber - AnchorDate.AddYears(years).DayNumber;
        var running = Panels.Where(p => !p.Concluded).Select(p => p.Key).ToHashSet(StringComparer.Ordinal);
        string Text(string text) => years == 0 ? text
            : YearInText().Replace(text, m => (int.Parse(m.Value, CultureInfo.InvariantCulture) + years).ToString(CultureInfo.InvariantCulture));
        string Moved(string period)
        {
            var p = Period.Parse(period);
            return (p.IsYear ? Period.OfYear(p.Year + years) : Period.OfQuarter(p.Year + years, p.Quarter)).ToString();
        }
        DateTime At(DateTime t, string panel) => t.AddYears(years).AddDays(running.Contains(panel) ? days : 0);
        return this with
        {
            AnchorDate = today,
            Indicators = [.. Indicators.Select(i => i with { Name = Text(i.Name), Description = Text(i.Description) })],
            Observations = [.. Observations.Select(o => o with { Period = Moved(o.Period) })],
            Panels = [.. Panels.Select(p => p with
            {
                Title = Text(p.Title),
                Brief = Text(p.Brief),
                StartsOn = p.StartsOn.AddYears(years).AddDays(running.Contains(p.Key) ? days : 0),
                TargetPeriods = string.Join(",", p.TargetPeriods.Split(',').Select(Moved)),
                Questions = [.. p.Questions.Select(q => q with
                {
                    Label = Text(q.Label), Help = Text(q.Help), CalibrationPeriod = q.CalibrationPeriod is { } c ? Moved(c) : null,
                })],
                Rounds = [.. p.Rounds.Select(r => r with { OpensAt = At(r.OpensAt, p.Key), ClosesAt = At(r.ClosesAt, p.Key) })],
            })],
            Estimates = [.. Estimates.Select(e => e with { Period = Moved(e.Period), Rationale = Text(e.Rationale), SubmittedAt = At(e.SubmittedAt, e.Panel) })],
        };
    }

    /// <summary>A year written in text, e.g. the 2027 of "outlook 2027-2031" or "(2015 = 100)".</summary>
    [GeneratedRegex(@"\b(19|20)\d{2}\b")]
    private static partial Regex YearInText();

    private static string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    private static string? F(double? v) => v?.ToString("R", CultureInfo.InvariantCulture);

    private static string F(int v) => v.ToString(CultureInfo.InvariantCulture);

    private static double? D(string? s) => s is null ? null : double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture);
}

public static class DemoFiles
{
    /// <summary>
    /// Finds the demo-data folder: the one beside PanelRound.sln above the content root (a
    /// clone), or the nearest folder above it that holds demo-data/panels.json (a published app).
    /// </summary>
    public static string? FindFolder(string start)
    {
        for (var dir = new DirectoryInfo(start); dir is not null; dir = dir.Parent)
        {
            var candidate = Path.Combine(dir.FullName, "demo-data");
            if (File.Exists(Path.Combine(dir.FullName, "PanelRound.sln")) || File.Exists(Path.Combine(candidate, "panels.json")))
            {
                return candidate;
            }
        }
        return null;
    }

    /// <summary>A path given on the command line: relative paths are taken from the repository root when there is one.</summary>
    public static string ResolveOut(string path, string contentRoot)
    {
        if (Path.IsPathRooted(path))
        {
            return path;
        }
        var root = FindFolder(contentRoot) is { } demo ? Path.GetDirectoryName(demo)! : Environment.CurrentDirectory;
        return Path.GetFullPath(Path.Combine(root, path));
    }
}
