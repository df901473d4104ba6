namespace PanelRound.Web.Demo;

/// <summary>
/// The demo's calibration questions: ten quarterly Calderport figures for a quarter whose numbers
/// the research team has but the market has not seen yet, asked in the running panel and answered
/// by each expert with their traits (bias, noise, width of their ranges), so that the
/// over-confident expert scores low calibration and the accurate one high. Drawn from their own
/// random stream, so the rest of the scenario is unchanged by them. Everything here is invented.
/// </summary>
/// <remarks>
/// The history runs to the first quarter of the anchor year and the questions ask about the
/// second: the demo's clock may move the running panel by up to half a year either way
/// (<see cref="DemoScenario.AsOf"/>), and every observation must be known by then.
/// </remarks>
internal static class DemoCalibration
{
    private sealed record Figure(string Key, string Name, string Unit, int Decimals, double Start, double Drift, double Volatility, bool LogScale, string Description);

    /// <summary>The period the calibration questions ask about (in the anchor year).</summary>
    public const string Period = "2026Q2";

    private const int FirstYear = 2023;

    private static readonly Figure[] Figures =
    [
        new("res-transactions-q", "Residential sales completed, Calderport, quarterly", "sales", 0, 1450, 0.005, 0.06, false, "Registered sales of dwellings in the quarter."),
        new("res-volume-q", "Residential transaction volume, Calderport, quarterly", "EUR m", 1, 420, 0.01, 0.07, false, "Value of registered dwelling sales in the quarter."),
        new("newbuild-price-oh-q", "New-build apartment price, Old Harbour, quarterly average", "EUR/m²", 0, 5200, 0.008, 0.02, false, "Achieved new-build sales price, quarter average."),
        new("office-take-up-q", "Office take-up, central business district, quarterly", "m²", 0, 38000, 0.0, 0.12, false, "Office space let in the quarter."),
        new("office-vacancy-q", "Office vacancy rate, central business district, quarter-end", "%", 2, 8.4, 0.0, 0.03, false, "Vacant office space as a share of stock."),
        new("prime-yield-q", "Prime office yield, Calderport, quarter-end", "%", 2, 4.9, -0.002, 0.015, false, "Net initial yield on prime office investment."),
        new("mortgage-rate-q", "Average rate on new mortgages, Calderport lenders, quarterly", "%", 2, 3.6, -0.01, 0.025, false, "Average initial rate on new residential mortgages."),
        new("building-permits-q", "Residential building permits, Calderport, quarterly", "dwellings", 0, 610, 0.0, 0.10, false, "Dwellings in building permits granted in the quarter."),
        new("retail-rent-q", "Prime high-street retail rent, Calderport, quarter-end", "EUR/m²/month", 2, 78, 0.004, 0.015, false, "Headline rent for prime high-street units."),
        new("invest-volume-q", "Commercial investment volume, Calderport, quarterly", "EUR m", 1, 260, 0.0, 0.25, true, "Value of commercial property investment deals in the quarter."),
    ];

    private static readonly double Z90 = 1.2815515655446004;

    /// <summary>Adds the indicators, their quarterly history, the questions with their true values, and the running panel's answers.</summary>
    public static void Add(
        int seed, string panelKey, IReadOnlyList<(string Key, double Bias, double Noise, double Width, double Herding)> traits,
        List<DemoIndicator> indicators, List<DemoObservation> observations, List<DemoPanel> panels, List<DemoEstimate> estimates)
    {
        var rng = new Random(seed ^ 0x5eed);
        var index = panels.FindIndex(p => p.Key == panelKey);
        var panel = panels[index];
        var questions = new List<DemoQuestion>();
        foreach (var f in Figures)
        {
            indicators.Add(new DemoIndicator(f.Key, f.Name, f.Unit, f.Decimals, f.Description));
            var value = f.Start;
            for (var year = FirstYear; year <= 2026; year++)
            {
                for (var q = 1; q <= 4; q++)
                {
                    var period = $"{year}Q{q}";
                    value = Round(value * (1 + f.Drift + (f.Volatility * 0.6 * Normal(rng))), f.Decimals);
                    if (period == Period)
                    {
                        questions.Add(new DemoQuestion(f.Key, f.Name.Replace(", quarterly", "", StringComparison.Ordinal) + $" in {Period}", "Range",
                            0, Round(f.Start * 10, 0), Round(f.Start * 0.5, f.Decimals), Round(f.Start * 1.8, f.Decimals),
                            $"Give your P10, P50 and P90 for {Period}, in {f.Unit}.", Period, TrueValue: value, LogScale: f.LogScale ? true : null));
                        break;
                    }
                    observations.Add(new DemoObservation(f.Key, period, value, "Calderport Property Observatory, quarterly bulletin (invented)"));
                }
            }
        }
        panels[index] = panel with { Questions = [.. panel.Questions, .. questions] };

        var members = panel.Members.Select(m => traits.Single(t => t.Key == m.Expert)).ToList();
        foreach (var (question, f) in questions.Zip(Figures))
        {
            var truth = question.TrueValue!.Value;
            var sd = f.Volatility * Math.Abs(truth);
            var first = members.Select(m => (truth * (1 + m.Bias)) + (m.Noise / 0.03 * sd * Normal(rng))).ToArray();
            var current = first;
            foreach (var round in panel.Rounds)
            {
                if (round.Number > 1)
                {
                    var median = current.Order().ElementAt(current.Length / 2);
                    current = current.Select((v, i) => v + (members[i].Herding * (median - v))).ToArray();
                }
                for (var i = 0; i < members.Count; i++)
                {
                    if (!round.Closed && i % 2 == 1)
                    {
                        continue;
                    }
                    var m = members[i];
                    var half = Z90 * m.Noise / 0.03 * sd * m.Width;
                    var v = current[i];
                    var lo = f.LogScale ? v * Math.Exp(-half / Math.Abs(truth)) : v - half;
                    var hi = f.LogScale ? v * Math.Exp(half / Math.Abs(truth)) : v + half;
                    var hours = round.Closed ? 24 * 10 : (int)(DemoGenerator.Anchor.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc) - round.OpensAt).TotalHours - 3;
                    estimates.Add(new DemoEstimate(panel.Key, round.Number, m.Key, f.Key, Period, null,
                        Round(lo, f.Decimals + 1), Round(v, f.Decimals + 1), Round(hi, f.Decimals + 1), m.Width < 0.5 ? 5 : 3, "",
                        round.OpensAt.AddHours(2 + rng.Next(0, hours))));
                }
            }
        }
    }

    private static double Normal(Random rng)
    {
        var u1 = 1.0 - rng.NextDouble();
        var u2 = rng.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    private static double Round(double v, int decimals) => Math.Round(v, decimals, MidpointRounding.AwayFromZero);
}
