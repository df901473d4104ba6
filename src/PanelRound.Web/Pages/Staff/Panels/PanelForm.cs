using System.ComponentModel.DataAnnotations;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Panels;

namespace PanelRound.Web.Pages.Staff.Panels;

/// <summary>The panel form of the create and edit pages.</summary>
public sealed class PanelForm
{
    [Display(Name = "Title")]
    public string? Title { get; set; }

    [Display(Name = "Brief (Markdown)")]
    public string? Brief { get; set; }

    [Display(Name = "Panel start"), DataType(DataType.Date)]
    public DateOnly? StartsOn { get; set; }

    [Display(Name = "Target periods")]
    public string? TargetPeriods { get; set; }

    /// <summary>An IANA time zone name; messages to experts give each deadline in UTC and in this zone.</summary>
    [Display(Name = "Time zone")]
    public string? TimeZone { get; set; } = "UTC";

    [Display(Name = "Contact name")]
    public string? ContactName { get; set; }

    [Display(Name = "Contact email")]
    public string? ContactEmail { get; set; }

    public SettingsForm Settings { get; set; } = new();

    /// <summary>The settings as the form edits them; a new form starts from the defaults of <see cref="PanelSettings"/>, their one home.</summary>
    public sealed class SettingsForm
    {
        private static readonly PanelSettings Defaults = new();

        public OutlierRuleSetting OutlierRule { get; set; } = Defaults.OutlierRule;

        public double TrimFraction { get; set; } = Defaults.TrimFraction;

        public double ConsensusThreshold { get; set; } = Defaults.ConsensusThreshold;

        public double StabilityThreshold { get; set; } = Defaults.StabilityThreshold;

        public int RoundCap { get; set; } = Defaults.RoundCap;

        public int MinimumGroupSize { get; set; } = Defaults.MinimumGroupSize;

        public bool ShowRationales { get; set; } = Defaults.ShowRationales;

        public bool OutliersMustJustify { get; set; } = Defaults.OutliersMustJustify;

        public ConsensusWeighting Weighting { get; set; } = Defaults.Weighting;

        public bool ShowBenchmarkToExperts { get; set; } = Defaults.ShowBenchmarkToExperts;

        public string ExpertBenchmark { get; set; } = Defaults.ExpertBenchmark;

        public int BenchmarkWindow { get; set; } = Defaults.BenchmarkWindow;

        public double RelationTolerance { get; set; } = Defaults.RelationTolerance;

        /// <summary>The fixed calibration cut-off; empty chooses the optimised one.</summary>
        public double? CalibrationCutoff { get; set; } = Defaults.CalibrationCutoff;

        public double CalibrationOvershoot { get; set; } = Defaults.CalibrationOvershoot;

        public bool CalibrationUsesFirstRound { get; set; } = Defaults.CalibrationUsesFirstRound;
    }

    public PanelInput ToInput() => new(Title, Brief, StartsOn, TargetPeriods, new PanelSettingsInput(
        Settings.OutlierRule.ToString(), Settings.TrimFraction, Settings.ConsensusThreshold, Settings.StabilityThreshold,
        Settings.RoundCap, Settings.MinimumGroupSize, Settings.ShowRationales, Settings.OutliersMustJustify, Settings.Weighting.ToString(),
        Settings.ShowBenchmarkToExperts, Settings.ExpertBenchmark, Settings.BenchmarkWindow, Settings.RelationTolerance,
        Settings.CalibrationCutoff, Settings.CalibrationCutoff is null, Settings.CalibrationOvershoot, Settings.CalibrationUsesFirstRound),
        TimeZone, ContactName, ContactEmail);

    public static PanelForm From(Panel p) => new()
    {
        Title = p.Title, Brief = p.Brief, StartsOn = p.StartsOn, TargetPeriods = p.TargetPeriods.Replace(",", ", ", StringComparison.Ordinal),
        TimeZone = p.TimeZone, ContactName = p.ContactName, ContactEmail = p.ContactEmail,
        Settings = new SettingsForm
        {
            OutlierRule = p.Settings.OutlierRule, TrimFraction = p.Settings.TrimFraction, ConsensusThreshold = p.Settings.ConsensusThreshold,
            StabilityThreshold = p.Settings.StabilityThreshold, RoundCap = p.Settings.RoundCap, MinimumGroupSize = p.Settings.MinimumGroupSize,
            ShowRationales = p.Settings.ShowRationales, OutliersMustJustify = p.Settings.OutliersMustJustify, Weighting = p.Settings.Weighting,
            ShowBenchmarkToExperts = p.Settings.ShowBenchmarkToExperts, ExpertBenchmark = p.Settings.ExpertBenchmark,
            BenchmarkWindow = p.Settings.BenchmarkWindow, RelationTolerance = p.Settings.RelationTolerance,
            CalibrationCutoff = p.Settings.CalibrationCutoff, CalibrationOvershoot = p.Settings.CalibrationOvershoot,
            CalibrationUsesFirstRound = p.Settings.CalibrationUsesFirstRound,
        },
    };
}
