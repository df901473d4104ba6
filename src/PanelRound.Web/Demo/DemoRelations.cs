using System.Globalization;

namespace PanelRound.Web.Demo;

/// <summary>
/// The demo's related questions: the running panel also asks for the prime office capital value, and declares that
/// its rent, capital value and yield questions are tied by income = value × yield (12 × monthly rent = capital value ×
/// yield / 100). The experts' capital values follow from their own rent and yield answers, give or take a little;
/// one expert's do not: the leasing agent's rents run far ahead of her capital values, so her own answers imply a
/// yield above the yield question's plausible range, and from round 2 she sees a private note. Drawn from their own
/// random stream, so the rest of the scenario is unchanged by them. Everything here is invented.
/// </summary>
internal static class DemoRelations
{
    public const string Rent = "office-rent-prime";

    public const string Yield = "office-yield-prime";

    public const string Value = "office-value-prime";

    /// <summary>The expert whose answers disagree: the leasing agent for two central towers.</summary>
    public const string Disagreeing = "EXP-05";

    /// <summary>The monthly rent her capital value and yield imply (EUR/m²/month): inside the rent question's plausible range.</summary>
    private const double ImpliedRent = 19.5;

    /// <summary>The yield her rent and capital value imply in the first target year (%), rising by 0.1 a year: above the yield question's plausible range.</summary>
    private const double ImpliedYield = 8.6;

    private const string Reason = "Two central towers are pre-let at record rents; prime rents will keep rising.";

    /// <summary>Adds the capital-value indicator and its history, the question, the relation, and the running panel's answers.</summary>
    public static void Add(int seed, string panelKey, List<DemoIndicator> indicators, List<DemoObservation> observations, List<DemoPanel> panels, List<DemoEstimate> estimates)
    {
        var rng = new Random(seed ^ 0x7e1a);
        indicators.Insert(indicators.FindIndex(i => i.Key == Yield) + 1, new DemoIndicator(Value, "Prime office capital value per m², Calderport central business district", "EUR/m²", 0,
            "Capital value of prime office space per m² of lettable area, year-end."));

        // The history: the capital value at which the year's rent and yield agree, with a little valuation noise.
        var yields = observations.Where(o => o.Indicator == Yield).ToDictionary(o => o.Period, o => o.Value);
        var history = observations.Where(o => o.Indicator == Rent)
            .Select(o => new DemoObservation(Value, o.Period, Round(12 * o.Value / (yields[o.Period] / 100) * (1 + (0.01 * Normal(rng))), 0), o.Source)).ToList();
        observations.InsertRange(observations.FindLastIndex(o => o.Indicator == Yield) + 1, history);

        var index = panels.FindIndex(p => p.Key == panelKey);
        var panel = panels[index];
        var last = history.Single(o => o.Period == (panel.StartsOn.Year - 1).ToString(CultureInfo.InvariantCulture)).Value;
        var question = new DemoQuestion(Value, "Prime office capital value per m², Calderport central business district", "Range", 0, Round(last * 4, 0),
            Round(last * 0.7, 0), Round(last * 1.5, 0), "Give your P10, P50 and P90 for each year, in EUR/m².");
        var questions = panel.Questions.ToList();
        questions.Insert(questions.FindIndex(q => q.Indicator == Yield) + 1, question);
        DemoRelation relation = new("Product",
            new DemoRelationTerm(Rent, "Prime office rent", 12), new DemoRelationTerm(Value, "Prime office capital value", 1), new DemoRelationTerm(Yield, "Prime office yield", 0.01));
        panels[index] = panel with { Questions = questions, Relations = [relation] };

        // The answers: each expert's capital value from their own rent and yield (P50s), the range as wide as theirs combined.
        var firstTarget = int.Parse(panel.TargetPeriods.Split(',')[0], CultureInfo.InvariantCulture);
        var yieldOf = estimates.Where(e => e.Panel == panelKey && e.Indicator == Yield).ToDictionary(e => (e.Round, e.Expert, e.Period));
        var values = new List<DemoEstimate>();
        for (var i = 0; i < estimates.Count; i++)
        {
            var rent = estimates[i];
            if (rent.Panel != panelKey || rent.Indicator != Rent)
            {
                continue;
            }
            var y = yieldOf[(rent.Round, rent.Expert, rent.Period)];
            double value;
            if (rent.Expert == Disagreeing)
            {
                // Her rent is set so that rent, value and yield imply the chosen rent and yield (each inside, resp. outside, its range).
                var implied = ImpliedYield + (0.1 * (int.Parse(rent.Period, CultureInfo.InvariantCulture) - firstTarget));
                var shift = Round(ImpliedRent * implied / y.P50!.Value, 3) - rent.P50!.Value;
                rent = rent with
                {
                    P10 = Round(rent.P10!.Value + shift, 3), P50 = Round(rent.P50.Value + shift, 3), P90 = Round(rent.P90!.Value + shift, 3),
                    Rationale = rent.Period == firstTarget.ToString(CultureInfo.InvariantCulture) ? Reason : rent.Rationale,
                };
                estimates[i] = rent;
                value = Round(12 * ImpliedRent / (y.P50.Value / 100), 1);
            }
            else
            {
                value = Round(12 * rent.P50!.Value / (y.P50!.Value / 100) * (1 + (0.01 * Normal(rng))), 1);
            }
            var width = Math.Sqrt(Math.Pow((rent.P90!.Value - rent.P10!.Value) / (2 * rent.P50!.Value), 2) + Math.Pow((y.P90!.Value - y.P10!.Value) / (2 * y.P50.Value), 2));
            values.Add(new DemoEstimate(panelKey, rent.Round, rent.Expert, Value, rent.Period, null,
                Round(value * (1 - width), 1), value, Round(value * (1 + width), 1), rent.Confidence, "", rent.SubmittedAt));
        }
        estimates.InsertRange(estimates.FindLastIndex(e => e.Panel == panelKey && e.Indicator == Yield) + 1, values);
    }

    private static double Normal(Random rng)
    {
        var u1 = 1.0 - rng.NextDouble();
        var u2 = rng.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    private static double Round(double v, int decimals) => Math.Round(v, decimals, MidpointRounding.AwayFromZero);
}
