using System.Globalization;

namespace PanelRound.Web.Demo;

/// <summary>
/// Generates the invented demo scenario (the city of Calderport) from a fixed seed, so the files
/// in demo-data/ can be rebuilt byte for byte:
/// <c>dotnet run --project src/PanelRound.Web -- demo-generate --out demo-data</c>.
/// </summary>
/// <remarks>
/// Experts have persistent traits (a relative bias, a noise level, how wide their ranges are
/// relative to their real uncertainty, and how far they move toward the group in later rounds),
/// and their forecasts of past panels are drawn around the realised observations, so the
/// scorecard has something true to find. Everything here is invented.
/// <para>The scenario is written as of <see cref="Anchor"/> and agrees with that day's clock: the
/// last observation is of the year before (known on 15 February, well before the anchor), every
/// past panel asks only about years observed, and the open round's answers arrived before the
/// anchor. The loader moves it to the day it is loaded on (<see cref="DemoScenario.AsOf"/>).</para>
/// </remarks>
public static class DemoGenerator
{
    public const int DefaultSeed = 20261202;

    private sealed record Series(string Key, string Name, string Unit, int Decimals, string Description, double Start, double[] Steps, bool Additive, double[] Future);

    private sealed record Trait(string Key, string Name, string Affiliation, string Expertise, string Interests, string Profile,
        double Bias, double Noise, double Width, double Herding);

    /// <summary>The day the scenario is written for.</summary>
    public static readonly DateOnly Anchor = new(2026, 12, 2);

    private const int FirstYear = 2012;

    /// <summary>The last year with an observation: the last year that has ended on <see cref="Anchor"/>.</summary>
    private const int LastObservedYear = 2025;

    /// <summary>The last year of each series' invented path (the open panel's last target year).</summary>
    private const int LastPathYear = 2031;
    private const double Z90 = 1.2815515655446004; // standard normal quantile at 0.9

    private static readonly Series[] AllSeries =
    [
        new("apt-price-old-harbour", "New-build apartment price, Old Harbour district", "EUR/m²", 0,
            "Achieved sales price of new-build apartments, Old Harbour district, annual average.",
            3150, [3.5, 4.2, 5.0, 6.1, 5.5, 4.8, 3.9, 1.2, 7.5, 8.2, -4.5, -1.0, 2.8, 3.6], false, [3.2, 3.6, 3.1, 2.7, 2.5]),
        new("apt-price-millbrook", "New-build apartment price, Millbrook district", "EUR/m²", 0,
            "Achieved sales price of new-build apartments, Millbrook district, annual average.",
            2280, [2.8, 3.5, 4.1, 5.2, 5.8, 5.1, 4.4, 2.0, 8.8, 7.1, -3.2, 0.5, 3.4, 4.1], false, [3.8, 3.9, 3.4, 3.0, 2.8]),
        new("office-rent-prime", "Prime office rent, Calderport central business district", "EUR/m²/month", 2,
            "Headline rent for prime office space, year-end.",
            19.5, [1.5, 2.0, 2.5, 3.1, 3.4, 3.0, 2.2, -2.5, 0.8, 3.9, 4.6, 3.1, 2.4, 2.0], false, [2.1, 2.4, 2.2, 2.0, 1.9]),
        new("office-yield-prime", "Prime office yield, Calderport", "%", 2,
            "Net initial yield on prime office investment, year-end.",
            5.60, [-0.10, -0.15, -0.20, -0.25, -0.20, -0.15, -0.10, 0.05, -0.25, 0.10, 0.70, 0.35, -0.15, -0.10], true, [-0.10, -0.05, 0.0, 0.05, 0.05]),
        new("land-value-buildable", "Residential land value per m² of buildable area, Calderport", "EUR/m²", 0,
            "Residual land value per square metre of permitted gross floor area, annual average.",
            610, [4, 6, 8, 10, 9, 7, 5, 0, 12, 13, -8, -3, 4, 6], false, [4.5, 5.0, 4.2, 3.5, 3.2]),
        new("construction-cost-index", "Residential construction cost index, Calderport (2015 = 100)", "index", 1,
            "Tender price index for residential building work, annual average, 2015 = 100.",
            96.0, [1.6, 1.8, 1.9, 2.4, 3.1, 3.8, 3.5, 2.1, 7.9, 12.4, 6.8, 3.2, 2.6, 2.4], false, [2.6, 2.5, 2.4, 2.3, 2.2]),
    ];

    private static readonly Trait[] Traits =
    [
        new("EXP-01", "Ines Marlowe", "Harbourline Residential Brokers", "New-build sales, Old Harbour", "Sells new-build schemes on commission", "optimist: forecasts high across the board", 0.07, 0.03, 1.0, 0.35),
        new("EXP-02", "Tobias Renwick", "Renwick & Vale Valuers", "Residential valuation", "None declared", "pessimist: forecasts low across the board", -0.06, 0.03, 1.0, 0.35),
        new("EXP-03", "Helena Ostrova", "Calderport University, Department of Urban Economics", "Housing economics", "None declared", "accurate: small errors, honest ranges", 0.0, 0.012, 1.0, 0.25),
        new("EXP-04", "Marcus Delane", "Quayside Capital Research", "Office investment", "Advises office funds", "over-confident: narrow ranges", 0.01, 0.045, 0.3, 0.15),
        new("EXP-05", "Priya Anand", "Eastmere Property Advisers", "Office leasing", "Leasing agent for two central towers", "balanced", 0.015, 0.03, 1.1, 0.45),
        new("EXP-06", "Jonas Feld", "Calder Mutual Building Society", "Mortgage lending", "Lender to residential developers", "balanced", -0.02, 0.035, 1.2, 0.5),
        new("EXP-07", "Sofia Brandt", "Brandt Development Partners", "Residential development", "Developer with land holdings in Millbrook", "balanced", 0.02, 0.04, 0.9, 0.4),
        new("EXP-08", "Ravi Kellerman", "Northquay Cost Consultants", "Construction costs", "None declared", "balanced", -0.01, 0.03, 1.0, 0.3),
        new("EXP-09", "Clara Whitcombe", "Whitcombe Land & Planning", "Land and planning", "Acts for landowners", "balanced", 0.01, 0.04, 1.3, 0.55),
        new("EXP-10", "Daniel Okafor", "Calderport Municipal Housing Office", "Housing policy", "None declared", "balanced", -0.015, 0.035, 1.0, 0.4),
        new("EXP-11", "Mette Lindqvist", "Saltmarsh Asset Management", "Portfolio strategy", "Holds office and residential assets", "balanced", 0.005, 0.03, 1.0, 0.35),
        new("EXP-12", "Yusuf Demir", "Harbour Chamber of Commerce", "Regional economy", "None declared", "balanced", 0.025, 0.045, 1.1, 0.6),
        new("EXP-13", "Agnes Thorvald", "Thorvald Surveyors", "Building surveying", "None declared", "balanced", -0.025, 0.04, 1.0, 0.45),
        new("EXP-14", "Lukas Brennan", "Brennan Estates", "Residential letting", "Landlord in Old Harbour", "balanced", 0.02, 0.035, 0.9, 0.4),
    ];

    private sealed record PanelPlan(string Key, string Title, DateOnly StartsOn, int FirstTarget, int Targets, int[] Members, int RoundCount, bool Concluded, DateOnly[] RoundStarts);

    private static readonly PanelPlan[] Plans =
    [
        new("calderport-2019", "Market outlook 2020-2022, Calderport", new DateOnly(2019, 9, 2), 2020, 3, [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 13], 2, true,
            [new DateOnly(2019, 9, 2), new DateOnly(2019, 9, 23)]),
        new("calderport-2021", "Market outlook 2022-2024, Calderport", new DateOnly(2021, 9, 1), 2022, 3, [1, 2, 3, 4, 5, 6, 8, 9, 10, 11, 12], 3, true,
            [new DateOnly(2021, 9, 1), new DateOnly(2021, 9, 20), new DateOnly(2021, 10, 11)]),
        new("calderport-2022", "Market outlook 2023-2025, Calderport", new DateOnly(2022, 9, 5), 2023, 3, [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14], 2, true,
            [new DateOnly(2022, 9, 5), new DateOnly(2022, 9, 26)]),
        new("calderport-2027", "Residential and office outlook 2027-2031, Calderport", new DateOnly(2026, 11, 2), 2027, 5, [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12], 2, false,
            [new DateOnly(2026, 11, 2), new DateOnly(2026, 11, 23)]),
    ];

    private static readonly string[] UpReasons =
    [
        "Thin pipeline of completions over the next two years supports values.",
        "Household formation is running ahead of new supply.",
        "Financing conditions are easing and buyers are returning.",
        "Occupiers are consolidating into the best buildings, which favours prime.",
        "Tender prices are still catching up with wage settlements in the trades.",
        "Infrastructure works on the harbour line will lift the district.",
    ];

    private static readonly string[] DownReasons =
    [
        "Affordability is stretched; further gains look hard to sustain.",
        "A large block of permitted schemes will complete at once.",
        "Refinancing pressure will force some sellers to accept lower prices.",
        "Hybrid working keeps office demand below its earlier level.",
        "Materials prices have turned and contractors are competing for work.",
        "Investors still demand a wider spread over government bonds.",
    ];

    private static readonly string[] HoldReasons =
    [
        "I see the market broadly flat in real terms.",
        "No strong signal either way; I stay close to trend.",
        "The group's view matches my own reading of the data.",
    ];

    /// <summary>Builds the whole scenario from the seed.</summary>
    public static DemoScenario Generate(int seed = DefaultSeed)
    {
        var rng = new Random(seed);
        var observations = new List<DemoObservation>();
        var truth = new Dictionary<(string, int), double>();
        foreach (var s in AllSeries)
        {
            var values = Path(s, rng);
            for (var y = FirstYear; y <= LastPathYear; y++)
            {
                truth[(s.Key, y)] = values[y - FirstYear];
                if (y <= LastObservedYear)
                {
                    var source = y == LastObservedYear ? "Calderport Property Observatory, provisional annual figure (invented)" : "Calderport Property Observatory, annual bulletin (invented)";
                    observations.Add(new DemoObservation(s.Key, y.ToString(CultureInfo.InvariantCulture), values[y - FirstYear], source));
                }
            }
        }

        var codes = new HashSet<string>();
        var panels = new List<DemoPanel>();
        var estimates = new List<DemoEstimate>();
        foreach (var plan in Plans)
        {
            var members = plan.Members.Select(m => Traits[m - 1]).ToList();
            var questions = AllSeries.Select(s => Question(s, truth[(s.Key, plan.StartsOn.Year - 1)])).ToList();
            var rounds = new List<DemoRound>();
            for (var r = 0; r < plan.RoundCount; r++)
            {
                var opens = plan.RoundStarts[r].ToDateTime(new TimeOnly(8, 0), DateTimeKind.Utc);
                var closes = opens.AddDays(r == plan.RoundCount - 1 && !plan.Concluded ? 21 : 14).Date.AddHours(17);
                rounds.Add(new DemoRound(r + 1, opens, closes, plan.Concluded || r < plan.RoundCount - 1));
            }
            var demoMembers = members.Select(m => new DemoMember(m.Key, Code(rng, codes), Token(rng))).ToList();
            panels.Add(new DemoPanel(plan.Key, plan.Title, Brief(plan), plan.StartsOn,
                string.Join(",", Enumerable.Range(plan.FirstTarget, plan.Targets)), plan.Concluded, questions, demoMembers, rounds));

            foreach (var s in AllSeries)
            {
                var range = IsRange(s);
                for (var t = plan.FirstTarget; t < plan.FirstTarget + plan.Targets; t++)
                {
                    var horizon = t - plan.StartsOn.Year;
                    var actual = truth[(s.Key, t)];
                    var scale = Math.Abs(actual);
                    // Round 1: each expert's own view around the outcome, with their bias and noise.
                    var first = members.Select(m =>
                    {
                        var sd = m.Noise * Math.Sqrt(horizon) * scale;
                        return actual * (1 + m.Bias * Math.Sqrt(horizon)) + sd * Normal(rng);
                    }).ToArray();
                    var current = first;
                    for (var r = 1; r <= plan.RoundCount; r++)
                    {
                        var round = rounds[r - 1];
                        if (r > 1)
                        {
                            var median = Median(current);
                            current = current.Select((v, i) => v + members[i].Herding * (median - v) + 0.003 * scale * Normal(rng)).ToArray();
                        }
                        for (var i = 0; i < members.Count; i++)
                        {
                            var m = members[i];
                            // In the open round only about half the panel has answered yet.
                            if (!round.Closed && i % 2 == 1)
                            {
                                continue;
                            }
                            var v = Round(current[i], s.Decimals + 1);
                            var stated = Z90 * m.Noise * Math.Sqrt(horizon) * scale * m.Width;
                            var last = truth[(s.Key, plan.StartsOn.Year - 1)];
                            var rationale = rng.NextDouble() < 0.6 ? Reason(rng, v, last) : "";
                            // Answers arrive over ten days; in the open round, before the anchor day.
                            var hours = round.Closed ? 24 * 10 : (int)(Anchor.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc) - round.OpensAt).TotalHours - 3;
                            var at = round.OpensAt.AddHours(2 + rng.Next(0, hours));
                            estimates.Add(range
                                ? new DemoEstimate(plan.Key, r, m.Key, s.Key, t.ToString(CultureInfo.InvariantCulture), null,
                                    Round(v - stated, s.Decimals + 1), v, Round(v + stated, s.Decimals + 1), m.Width < 0.5 ? 5 : 2 + rng.Next(0, 4), rationale, at)
                                : new DemoEstimate(plan.Key, r, m.Key, s.Key, t.ToString(CultureInfo.InvariantCulture), v,
                                    null, null, null, m.Width < 0.5 ? 5 : 2 + rng.Next(0, 4), rationale, at));
                        }
                    }
                }
            }
        }

        var indicatorList = AllSeries.Select(s => new DemoIndicator(s.Key, s.Name, s.Unit, s.Decimals, s.Description)).ToList();
        var running = Plans.Single(p => !p.Concluded).Key;
        DemoCalibration.Add(seed, running, [.. Traits.Select(t => (t.Key, t.Bias, t.Noise, t.Width, t.Herding))], indicatorList, observations, panels, estimates);
        DemoRelations.Add(seed, running, indicatorList, observations, panels, estimates);

        var experts = Traits.Select(t => new DemoExpert(t.Key, t.Name, Email(t.Name), t.Affiliation, t.Expertise, t.Interests, t.Profile)).ToList();
        var indicators = indicatorList;
        DemoStaff[] staff =
        [
            new("facilitator@calderport-demo.example", "Fiona Harcourt (demo facilitator)", "Facilitator", "Demo-Facilitator-2026"),
            new("reviewer@calderport-demo.example", "Robert Achterberg (demo director)", "Reviewer", "Demo-Reviewer-2026"),
            new("admin@calderport-demo.example", "Amira Castell (demo administrator)", "Administrator", "Demo-Admin-2026!"),
        ];
        return new DemoScenario(Anchor, staff, indicators, observations, experts, panels, estimates);
    }

    private static bool IsRange(Series s) => s.Key.StartsWith("office-", StringComparison.Ordinal);

    private static double[] Path(Series s, Random rng)
    {
        var n = LastPathYear - FirstYear + 1;
        var values = new double[n];
        values[0] = s.Start;
        for (var i = 1; i < n; i++)
        {
            var step = i - 1 < s.Steps.Length ? s.Steps[i - 1] : s.Future[i - 1 - s.Steps.Length];
            var noise = (rng.NextDouble() - 0.5) * (s.Additive ? 0.04 : 0.8);
            values[i] = s.Additive ? values[i - 1] + step + noise : values[i - 1] * (1 + (step + noise) / 100);
        }
        if (s.Key == "construction-cost-index")
        {
            var at2015 = values[2015 - FirstYear];
            for (var i = 0; i < n; i++)
            {
                values[i] = values[i] * 100 / at2015;
            }
        }
        return values.Select(v => Round(v, s.Decimals)).ToArray();
    }

    private static DemoQuestion Question(Series s, double last)
    {
        var range = IsRange(s);
        var hardMax = s.Unit == "%" ? 15 : Round(last * 4, 0);
        var hardMin = s.Unit == "%" ? 0.5 : 0;
        return new DemoQuestion(s.Key, s.Name, range ? "Range" : "Point", hardMin, hardMax,
            Round(last * (s.Unit == "%" ? 0.6 : 0.7), s.Decimals), Round(last * (s.Unit == "%" ? 1.6 : 1.5), s.Decimals),
            range ? $"Give your P10, P50 and P90 for each year, in {s.Unit}." : $"Give your central estimate for each year, in {s.Unit}.");
    }

    private static string Brief(PanelPlan plan) =>
        $"""
        ## {plan.Title}

        This panel collects anonymous expert views on the Calderport market for the feasibility
        models of the research team. Answer each question for every target year, with a short
        rationale where you can. From round 2 you will see the group's anonymous feedback from the
        previous round and may revise or hold your answer.

        *Values are nominal, annual averages unless a question says year-end.* This is a forecast
        exercise, not a valuation or investment advice.
        """;

    private static string Reason(Random rng, double value, double last)
    {
        var change = (value - last) / Math.Abs(last);
        var bank = change > 0.04 ? UpReasons : change < -0.01 ? DownReasons : HoldReasons;
        return bank[rng.Next(bank.Length)];
    }

    private static string Code(Random rng, HashSet<string> used)
    {
        const string alphabet = "ABCDEFGHJKLMNPQRSTUVWXYZ23456789";
        while (true)
        {
            var c = new char[7];
            for (var i = 0; i < 7; i++)
            {
                c[i] = i == 3 ? '-' : alphabet[rng.Next(alphabet.Length)];
            }
            var code = new string(c);
            if (used.Add(code))
            {
                return code;
            }
        }
    }

    private static string Token(Random rng)
    {
        var bytes = new byte[32];
        rng.NextBytes(bytes);
        return "demo-" + Convert.ToBase64String(bytes).TrimEnd('=').Replace('+', '-').Replace('/', '_');
    }

    private static string Email(string name) =>
        name.ToLowerInvariant().Replace(' ', '.') + "@experts.calderport-demo.example";

    private static double Normal(Random rng)
    {
        // Box-Muller transform.
        var u1 = 1.0 - rng.NextDouble();
        var u2 = rng.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
    }

    private static double Median(double[] values)
    {
        var s = values.Order().ToArray();
        return s.Length % 2 == 1 ? s[s.Length / 2] : (s[s.Length / 2 - 1] + s[s.Length / 2]) / 2;
    }

    private static double Round(double v, int decimals) => Math.Round(v, decimals, MidpointRounding.AwayFromZero);
}
