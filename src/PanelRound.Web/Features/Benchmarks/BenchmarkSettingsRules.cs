using PanelRound.Core.Forecasting;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Benchmarks;

/// <summary>The panel settings of benchmarks and relations: read from their input, field errors under <c>settings.*</c>. Pure.</summary>
public static class BenchmarkSettingsRules
{
    /// <summary>The help text beside "show a statistical benchmark to experts".</summary>
    public const string AnchoringHelp =
        "Off by default. A number shown before an estimate pulls the estimate towards it (anchoring: A. Tversky and D. Kahneman, "
        + "\"Judgment under Uncertainty: Heuristics and Biases\", Science 185, 1974), so a benchmark line on the expert's chart can narrow "
        + "the panel's answers around a simple statistical forecast instead of adding independent judgment. Turn it on only when you want experts to react to it.";

    public static void Apply(PanelSettings settings, PanelSettingsInput x, FieldErrors errors)
    {
        settings.ShowBenchmarkToExperts = x.ShowBenchmarkToExperts ?? settings.ShowBenchmarkToExperts;
        if (x.ExpertBenchmark is { } key)
        {
            if (BenchmarkMethods.TryParse(key, out var method))
            {
                settings.ExpertBenchmark = BenchmarkMethods.Key(method.Value);
            }
            else
            {
                errors.Add("settings.expertBenchmark", "The benchmark shown to experts is one of " + string.Join(", ", BenchmarkMethods.All.Select(BenchmarkMethods.Key)) + ".");
            }
        }
        if (x.BenchmarkWindow is { } k)
        {
            if (k is < 1 or > 40)
            {
                errors.Add("settings.benchmarkWindow", "k of the mean of the last k observations is 1 to 40.");
            }
            else
            {
                settings.BenchmarkWindow = k;
            }
        }
        if (x.RelationTolerance is { } t)
        {
            if (!double.IsFinite(t) || t < 0.001 || t > 1)
            {
                errors.Add("settings.relationTolerance", "The relation tolerance is between 0.001 and 1 (a share: 0.05 = 5%).");
            }
            else
            {
                settings.RelationTolerance = t;
            }
        }
    }
}
