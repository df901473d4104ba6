using System.ComponentModel.DataAnnotations;
using PanelRound.Data.Entities;
using PanelRound.Web.Application;

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

    public SettingsForm Settings { get; set; } = new();

    public sealed class SettingsForm
    {
        public OutlierRuleSetting OutlierRule { get; set; } = OutlierRuleSetting.TukeyFences;

        public double TrimFraction { get; set; } = 0.10;

        public double ConsensusThreshold { get; set; } = 0.10;

        public double StabilityThreshold { get; set; } = 0.15;

        public int RoundCap { get; set; } = 3;

        public int MinimumGroupSize { get; set; } = 3;

        public bool ShowRationales { get; set; } = true;

        public bool OutliersMustJustify { get; set; } = true;

        public ConsensusWeighting Weighting { get; set; } = ConsensusWeighting.Equal;
    }

    public PanelInput ToInput() => new(Title, Brief, StartsOn, TargetPeriods, new PanelSettingsInput(
        Settings.OutlierRule.ToString(), Settings.TrimFraction, Settings.ConsensusThreshold, Settings.StabilityThreshold,
        Settings.RoundCap, Settings.MinimumGroupSize, Settings.ShowRationales, Settings.OutliersMustJustify, Settings.Weighting.ToString()));

    public static PanelForm From(Panel p) => new()
    {
        Title = p.Title, Brief = p.Brief, StartsOn = p.StartsOn, TargetPeriods = p.TargetPeriods.Replace(",", ", ", StringComparison.Ordinal),
        Settings = new SettingsForm
        {
            OutlierRule = p.Settings.OutlierRule, TrimFraction = p.Settings.TrimFraction, ConsensusThreshold = p.Settings.ConsensusThreshold,
            StabilityThreshold = p.Settings.StabilityThreshold, RoundCap = p.Settings.RoundCap, MinimumGroupSize = p.Settings.MinimumGroupSize,
            ShowRationales = p.Settings.ShowRationales, OutliersMustJustify = p.Settings.OutliersMustJustify, Weighting = p.Settings.Weighting,
        },
    };
}
