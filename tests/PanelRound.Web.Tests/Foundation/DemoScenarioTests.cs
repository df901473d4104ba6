using PanelRound.Core.Domain;
using PanelRound.Web.Demo;

namespace PanelRound.Web.Tests.Foundation;

public class DemoScenarioTests
{
    private static readonly string Shipped = Path.Combine(AppContext.BaseDirectory, "demo-data");

    [Fact]
    public void Generate_DefaultSeed_ReproducesTheShippedFilesByteForByte()
    {
        var folder = Path.Combine(Path.GetTempPath(), "panelround-demo-" + Guid.NewGuid().ToString("N")[..8]);
        DemoGenerator.Generate().Write(folder);
        foreach (var file in Directory.GetFiles(Shipped))
        {
            Assert.True(File.ReadAllBytes(file).AsSpan().SequenceEqual(File.ReadAllBytes(Path.Combine(folder, Path.GetFileName(file)))),
                $"{Path.GetFileName(file)} differs from the generator's output: run demo-generate and commit.");
        }
        Directory.Delete(folder, recursive: true);
    }

    [Fact]
    public void Scenario_AsIssued_HasTheRequiredShape()
    {
        var s = DemoScenario.Read(Shipped);
        Assert.True(s.Experts.Count >= 12);
        foreach (var trait in new[] { "optimist", "pessimist", "accurate", "over-confident" })
        {
            Assert.Contains(s.Experts, e => e.Profile.StartsWith(trait, StringComparison.Ordinal));
        }
        var past = s.Panels.Where(p => p.Concluded).ToList();
        Assert.Equal(3, past.Count);
        var current = Assert.Single(s.Panels, p => !p.Concluded);
        Assert.Equal("2027,2028,2029,2030,2031", current.TargetPeriods);
        Assert.True(current.Rounds.Single(r => r.Number == 1).Closed);
        Assert.False(current.Rounds.Single(r => r.Number == 2).Closed);
        // Six annual series asked about by every panel, a seventh (the capital value tied to rent and yield) by the running
        // panel, and ten quarterly figures behind the running panel's calibration questions.
        var calibration = current.Questions.Where(q => q.CalibrationPeriod is not null).ToList();
        Assert.Equal(10, calibration.Count);
        Assert.All(calibration, q => Assert.Equal("Range", q.Format));
        Assert.All(calibration, q => Assert.NotNull(q.TrueValue));
        Assert.Equal(17, s.Indicators.Count);
        Assert.Equal("office-value-prime", Assert.Single(current.Relations!).First.Indicator);
        foreach (var i in s.Indicators.Where(i => calibration.All(q => q.Indicator != i.Key)))
        {
            var before = s.Observations.Count(o => o.Indicator == i.Key && Period.Parse(o.Period).Year < current.StartsOn.Year);
            Assert.True(before >= 10, $"{i.Key} has {before} observations before the current panel.");
            // Every past target period has its outcome, so one set of observations scores them all.
            foreach (var p in past)
            {
                foreach (var t in p.TargetPeriods.Split(','))
                {
                    Assert.Contains(s.Observations, o => o.Indicator == i.Key && o.Period == t);
                }
            }
        }
    }
}
