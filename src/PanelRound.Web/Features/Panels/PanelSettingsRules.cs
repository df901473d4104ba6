using PanelRound.Data.Entities;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Panels;

/// <summary>A panel's settings as the API and the form send them: names for the rules, shares as fractions; null keeps the current value.</summary>
public sealed record PanelSettingsInput(
    string? OutlierRule = null, double? TrimFraction = null, double? ConsensusThreshold = null, double? StabilityThreshold = null,
    int? RoundCap = null, int? MinimumGroupSize = null, bool? ShowRationales = null, bool? OutliersMustJustify = null, string? Weighting = null,
    bool? ShowBenchmarkToExperts = null, string? ExpertBenchmark = null, int? BenchmarkWindow = null, double? RelationTolerance = null,
    double? CalibrationCutoff = null, bool? OptimiseCalibrationCutoff = null, double? CalibrationOvershoot = null, bool? CalibrationUsesFirstRound = null);

/// <summary>
/// Reads a panel's settings from their input into the stored settings: each given value within
/// its bounds replaces the current one, a value out of bounds is a field error under
/// <c>settings.*</c> and leaves the current value. Pure: no database.
/// </summary>
public static class PanelSettingsRules
{
    /// <summary>Applies the input to the settings; errors go to <paramref name="errors"/>.</summary>
    public static void Apply(PanelSettings settings, PanelSettingsInput? input, FieldErrors errors)
    {
        var x = input ?? new PanelSettingsInput();
        if (x.OutlierRule is { } rule)
        {
            if (Enum.TryParse<OutlierRuleSetting>(rule, ignoreCase: true, out var r) && Enum.IsDefined(r))
            {
                settings.OutlierRule = r;
            }
            else
            {
                errors.Add("settings.outlierRule", "Outlier rule is SymmetricTrim, TukeyFences or ModifiedZScore.");
            }
        }
        if (x.Weighting is { } w)
        {
            if (Enum.TryParse<ConsensusWeighting>(w, ignoreCase: true, out var cw) && Enum.IsDefined(cw))
            {
                settings.Weighting = cw;
            }
            else
            {
                errors.Add("settings.weighting", "Weighting is Equal, TrackRecord or Calibration.");
            }
        }
        settings.TrimFraction = Bounded(errors, "settings.trimFraction", x.TrimFraction, settings.TrimFraction, 0, 0.45, "Trim fraction");
        settings.ConsensusThreshold = Bounded(errors, "settings.consensusThreshold", x.ConsensusThreshold, settings.ConsensusThreshold, 0.001, 1, "Consensus threshold");
        settings.StabilityThreshold = Bounded(errors, "settings.stabilityThreshold", x.StabilityThreshold, settings.StabilityThreshold, 0.001, 1, "Stability threshold");
        if (x.RoundCap is { } cap)
        {
            if (cap is < 1 or > 10)
            {
                errors.Add("settings.roundCap", "Round cap is 1 to 10.");
            }
            else
            {
                settings.RoundCap = cap;
            }
        }
        if (x.MinimumGroupSize is { } min)
        {
            if (min is < 3 or > 50)
            {
                errors.Add("settings.minimumGroupSize", "Minimum group size is 3 to 50: fewer answers than 3 are never shown.");
            }
            else
            {
                settings.MinimumGroupSize = min;
            }
        }
        BenchmarkSettingsRules.Apply(settings, x, errors);
        if (x.OptimiseCalibrationCutoff == true && x.CalibrationCutoff is not null)
        {
            errors.Add("settings.calibrationCutoff", "Give a calibration cut-off or ask for the optimised one, not both.");
        }
        else if (x.OptimiseCalibrationCutoff == true)
        {
            settings.CalibrationCutoff = null;
        }
        else if (x.CalibrationCutoff is { } cutoff)
        {
            settings.CalibrationCutoff = Bounded(errors, "settings.calibrationCutoff", cutoff, settings.CalibrationCutoff ?? 0, 0, 1, "Calibration cut-off");
        }
        settings.CalibrationOvershoot = Bounded(errors, "settings.calibrationOvershoot", x.CalibrationOvershoot, settings.CalibrationOvershoot, 0, 1, "Calibration overshoot");
        settings.CalibrationUsesFirstRound = x.CalibrationUsesFirstRound ?? settings.CalibrationUsesFirstRound;
        settings.ShowRationales = x.ShowRationales ?? settings.ShowRationales;
        settings.OutliersMustJustify = x.OutliersMustJustify ?? settings.OutliersMustJustify;
    }

    private static double Bounded(FieldErrors errors, string field, double? value, double current, double min, double max, string label)
    {
        if (value is not { } v)
        {
            return current;
        }
        if (!double.IsFinite(v) || v < min || v > max)
        {
            errors.Add(field, FormattableString.Invariant($"{label} is between {min} and {max} (a share: 0.10 = 10%)."));
            return current;
        }
        return v;
    }
}
