using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Panels;

/// <summary>A panel's settings, methods and states in words for people (never an enum's name).</summary>
public static class PanelWords
{
    /// <summary>The outlier rule, e.g. <c>Tukey fences (k = 1.5)</c>.</summary>
    public static string OutlierRule(PanelSettings s) => s.OutlierRule switch
    {
        OutlierRuleSetting.TukeyFences => "Tukey fences (k = 1.5)",
        OutlierRuleSetting.ModifiedZScore => "modified z-score above 3.5",
        _ => $"symmetric trim ({Pct(s.TrimFraction)} per tail)",
    };

    /// <summary>The weights of the consensus, e.g. <c>equal weights</c>.</summary>
    public static string Weighting(ConsensusWeighting w) => w switch
    {
        ConsensusWeighting.TrackRecord => "track-record weights",
        ConsensusWeighting.Calibration => "calibration-question weights",
        _ => "equal weights",
    };

    /// <summary>How the consensus is formed, e.g. <c>trimmed median, equal weights</c>.</summary>
    public static string Consensus(PanelSettings s) => s.Weighting switch
    {
        ConsensusWeighting.Calibration => "weighted median, calibration-question weights (range questions: a weighted pool of the experts' ranges)",
        _ => $"trimmed median, {Weighting(s.Weighting)} (range questions: the experts' P10 / P50 / P90 averaged)",
    };

    /// <summary>A question's response format, e.g. <c>Range (P10 / P50 / P90)</c>.</summary>
    public static string Format(ResponseFormat f) => f == ResponseFormat.Range ? "Range (P10 / P50 / P90)" : "Single value";

    /// <summary>Where a panel's rounds stand, e.g. <c>Round 2 open until 2026-12-20 17:00 UTC</c> or <c>3 rounds, all closed</c>.</summary>
    public static string RoundSummary(Panel p)
    {
        var open = p.Rounds.FirstOrDefault(r => r.State == RoundState.Open);
        if (open is not null)
        {
            return $"Round {open.Number} open until {open.ClosesAt.ToString("yyyy-MM-dd HH:mm", System.Globalization.CultureInfo.InvariantCulture)} UTC";
        }
        return p.Rounds.Count switch
        {
            0 => "No round yet",
            1 => "1 round, closed",
            var n => $"{n} rounds, all closed",
        };
    }

    /// <summary>Target periods for reading: consecutive years as a span (<c>2027–2031</c>), others listed (<c>2026Q1, 2026Q2</c>).</summary>
    public static string Periods(string commaSeparated)
    {
        var parts = commaSeparated.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries);
        var years = parts.Select(x => int.TryParse(x, System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var y) ? y : (int?)null).ToList();
        return parts.Length > 2 && years.All(y => y is not null) && years.Zip(years.Skip(1)).All(z => z.Second == z.First + 1)
            ? $"{parts[0]}–{parts[^1]}"
            : string.Join(", ", parts);
    }

    /// <summary>A share as a percentage with at most one decimal, e.g. 0.1 → <c>10%</c>, 0.125 → <c>12.5%</c>.</summary>
    public static string Pct(double share) => NumberText.Format(100 * share, "0.#") + "%";

    /// <summary>The settings as labelled sentences, in the order the facilitator reads them.</summary>
    public static IReadOnlyList<(string Label, string Text)> Settings(Panel p)
    {
        var s = p.Settings;
        return
        [
            ("Outliers", OutlierRule(s)),
            ("Consensus", Consensus(s)),
            ("Consensus reached", $"when the interquartile range is at most {Pct(s.ConsensusThreshold)} of the median, with at least 5 answers"),
            ("Stability", $"an answer moved when it changed by more than {Pct(s.StabilityThreshold)}"),
            ("Trimmed mean", $"{Pct(s.TrimFraction)} cut from each tail"),
            ("Rounds", s.RoundCap == 1 ? "at most 1" : $"at most {s.RoundCap}"),
            ("Group feedback", $"shown to experts from {s.MinimumGroupSize} answers; rationales {(s.ShowRationales ? "shown, without names" : "not shown")}"),
            ("Answers far from the group", s.OutliersMustJustify ? "outside the previous round's retained range, they need a rationale" : "need no rationale"),
            ("Related questions", $"flagged beyond ±{Pct(s.RelationTolerance)}"),
            ("Time zone for deadlines", p.TimeZone == "UTC" ? "UTC" : $"{p.TimeZone} (messages give UTC too)"),
        ];
    }
}
