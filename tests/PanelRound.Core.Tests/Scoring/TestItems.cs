using PanelRound.Core.Scoring;

namespace PanelRound.Core.Tests.Scoring;

/// <summary>Builders of scored items for the scoring tests.</summary>
internal static class TestItems
{
    public static readonly DateOnly Closed = new(2024, 1, 31);
    public static readonly DateOnly Known = new(2025, 3, 1);

    public static ScoredItem Point(
        double value,
        double outcome,
        double scale = double.NaN,
        double naive = double.NaN,
        string expert = "E1",
        string question = "price",
        string panel = "P1",
        string period = "2025",
        int round = 1,
        bool isFinal = true,
        DateOnly? closedOn = null,
        DateOnly? knownOn = null) => new()
        {
            ExpertKey = expert,
            QuestionKey = question,
            PanelKey = panel,
            Period = period,
            Round = round,
            IsFinalRound = isFinal,
            Value = value,
            Outcome = outcome,
            Scale = scale,
            NaiveForecast = naive,
            PanelClosedOn = closedOn ?? Closed,
            OutcomeKnownOn = knownOn ?? Known,
        };

    public static ScoredItem Range(
        double p10,
        double p50,
        double p90,
        double outcome,
        double scale = double.NaN,
        double naive = double.NaN,
        string expert = "E1",
        string question = "price",
        string panel = "P1",
        string period = "2025",
        int round = 1,
        bool isFinal = true,
        DateOnly? closedOn = null,
        DateOnly? knownOn = null) => new()
        {
            ExpertKey = expert,
            QuestionKey = question,
            PanelKey = panel,
            Period = period,
            Round = round,
            IsFinalRound = isFinal,
            P10 = p10,
            P50 = p50,
            P90 = p90,
            Outcome = outcome,
            Scale = scale,
            NaiveForecast = naive,
            PanelClosedOn = closedOn ?? Closed,
            OutcomeKnownOn = knownOn ?? Known,
        };

    /// <summary>One point item per (forecast, outcome) pair, each on its own period.</summary>
    public static ScoredItem[] Points(double[] forecasts, double[] outcomes, double scale = double.NaN, double naive = double.NaN, string expert = "E1") =>
        [.. forecasts.Select((f, i) => Point(f, outcomes[i], scale, naive, expert, period: (2025 + i).ToString(System.Globalization.CultureInfo.InvariantCulture)))];
}
