using System.Globalization;
using System.Net;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Demo;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Benchmarks;

/// <summary>
/// The demo's relation: the running panel ties its prime office rent, capital value and yield questions by
/// income = value × yield, and the one expert whose own answers imply a value outside a question's plausible
/// range sees a private note on their page; nobody else sees one.
/// </summary>
public abstract partial class DemoRelationTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly string DemoFolder = Path.Combine(AppContext.BaseDirectory, "demo-data");

    private const string Rent = "office-rent-prime";
    private const string Value = "office-value-prime";
    private const string Yield = "office-yield-prime";

    [SkippableFact]
    public async Task Demo_RunningPanelDeclaresRentValueYield_OnlyTheExpertWhoseOwnAnswersImplyAnOutOfRangeYieldSeesANote()
    {
        // A demo host of its own: signing in through a personal link records when the expert was last seen.
        var app = await StartAsync(new Dictionary<string, string?> { ["Demo:Enabled"] = "true", ["Demo:Folder"] = DemoFolder });
        var staff = await app.StaffClientAsync();
        var scenario = DemoScenario.Read(DemoFolder).AsOf(DateTime.UtcNow);
        var running = scenario.Panels.Single(p => !p.Concluded);
        var panelId = await app.WithDbAsync(db => db.Panels.Where(p => p.ExternalKey == running.Key).Select(p => p.Id).SingleAsync());
        var indicatorOf = await app.WithDbAsync(db => db.Questions.Where(q => q.PanelId == panelId).Select(q => new { q.Id, q.Indicator!.Key }).ToDictionaryAsync(q => q.Id, q => q.Key));

        // One relation: 12 × monthly rent = capital value × yield / 100 (annual income = value × yield).
        var relation = Assert.Single((await staff.GetOk($"/api/panels/{panelId}/relations")).AsArray())!;
        Assert.Equal("Product", (string)relation["shape"]!);
        foreach (var (role, indicator, factor) in new[] { ("result", Rent, 12.0), ("first", Value, 1.0), ("second", Yield, 0.01) })
        {
            Assert.Equal(indicator, indicatorOf[(int)relation[role]!["questionId"]!]);
            Assert.Equal(factor, (double)relation[role]!["factor"]!);
        }

        // Recomputation from the demo files with plain arithmetic: each member's own latest answer per period (the
        // open round's where given, else round 1's), P50s; each term implied by the other two and set against the
        // plausible range of its question in panels.json.
        var questions = running.Questions.ToDictionary(q => q.Indicator);
        var expected = new Dictionary<string, List<(string Period, string Indicator, double Implied)>>();
        foreach (var m in running.Members)
        {
            double? Own(string indicator, string period) => scenario.Estimates
                .Where(e => e.Panel == running.Key && e.Expert == m.Expert && e.Indicator == indicator && e.Period == period)
                .OrderByDescending(e => e.Round).FirstOrDefault()?.P50;
            foreach (var period in running.TargetPeriods.Split(','))
            {
                if (Own(Rent, period) is not { } r || Own(Value, period) is not { } v || Own(Yield, period) is not { } y)
                {
                    continue;
                }
                // In the order of operations of the base-unit identity: rent × 12 = value × yield × 0.01.
                foreach (var (indicator, implied) in new[] { (Rent, v * (y * 0.01) / 12), (Value, r * 12 / (y * 0.01)), (Yield, r * 12 / v / 0.01) })
                {
                    var q = questions[indicator];
                    if (implied < q.PlausibleMin || implied > q.PlausibleMax)
                    {
                        (expected.TryGetValue(m.Expert, out var list) ? list : expected[m.Expert] = []).Add((period, indicator, implied));
                    }
                }
            }
        }
        var (flaggedExpert, flagged) = Assert.Single(expected);
        Assert.Contains(flagged, f => f.Indicator == Yield);

        foreach (var m in running.Members)
        {
            var client = await StaffPages.ExpertClientAsync(app, m.Token);
            var html = await client.GetStringAsync("/expert");
            Assert.Contains(WebUtility.HtmlEncode(running.Title), html, StringComparison.Ordinal);
            var notes = NoteRegex().Matches(html).Select(n => WebUtility.HtmlDecode(n.Groups[1].Value)).ToList();
            if (m.Expert != flaggedExpert)
            {
                Assert.Empty(notes);
                Assert.DoesNotContain("private-note", html, StringComparison.Ordinal);
                continue;
            }
            // The expert's own figures only: the period, the question and the implied value as the page writes it.
            Assert.Equal(flagged.Count, notes.Count);
            foreach (var (period, indicator, implied) in flagged)
            {
                var q = questions[indicator];
                var decimals = scenario.Indicators.Single(i => i.Key == indicator).Decimals;
                Assert.Contains(notes, n => n.Contains($"Private note, {period}:", StringComparison.Ordinal)
                    && n.Contains($"imply {q.Label} of {implied.ToString("N" + decimals, CultureInfo.InvariantCulture)}", StringComparison.Ordinal));
            }
        }

        // Staff see the same disagreement per panel code on the open round's answers: that expert's code alone is
        // flagged beyond the tolerance.
        var code = running.Members.Single(m => m.Expert == flaggedExpert).PanelCode;
        var answered = scenario.Estimates.Where(e => e.Panel == running.Key && e.Round == 2 && e.Indicator == Value).Select(e => e.Expert).ToHashSet();
        Assert.Contains(flaggedExpert, answered);
        var check = await staff.GetOk($"/api/panels/{panelId}/relations/check");
        var codes = check["byPanelCode"]![0]!["codes"]!.AsArray();
        Assert.Equal(running.Members.Where(m => answered.Contains(m.Expert)).Select(m => m.PanelCode).Order(StringComparer.Ordinal),
            codes.Select(c => (string)c!["panelCode"]!));
        Assert.Equal([code], codes.Where(c => c!["periods"]!.AsArray().Any(p => (bool)p!["flagged"]!)).Select(c => (string)c!["panelCode"]!));
    }

    [GeneratedRegex("<div class=\"alert alert-info small private-note\" role=\"note\">(.*?)</div>", RegexOptions.Singleline)]
    private static partial Regex NoteRegex();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteDemoRelationTests(SqliteFixture fixture) : DemoRelationTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresDemoRelationTests(PostgresFixture fixture) : DemoRelationTests(fixture);
