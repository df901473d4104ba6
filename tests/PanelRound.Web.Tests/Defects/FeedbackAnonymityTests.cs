using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using PanelRound.Core.Statistics;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// The feedback reveals no individual's answer: an expert of a small group who knows their own
/// answer, reads everything the expert API shows, and knows exactly how the product computes its
/// feedback (Kerckhoffs' principle) tries to rebuild the others' answers by exhaustive search, and fails.
/// </summary>
public abstract class FeedbackAnonymityTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <param name="n">The group size.</param>
    /// <param name="seed">The seed of the invented answers.</param>
    /// <param name="low">The invented answers are integers from low to low + span.</param>
    /// <param name="span">The width of the truth; the attacker's grid is wider by span / 2 on each side.</param>
    [SkippableTheory]
    [InlineData(3, 11, 10, 20)]
    [InlineData(4, 12, 10, 20)]
    [InlineData(5, 13, 10, 20)]
    [InlineData(6, 14, 10, 20)]
    [InlineData(7, 15, 10, 10)]
    [InlineData(8, 16, 10, 10)]
    [InlineData(9, 17, 10, 8)]
    public async Task ExpertFeedback_SmallGroup_OthersAnswersCannotBeRebuilt(int n, int seed, int low, int span)
    {
        var answers = InventAnswers(n, seed, low, span);
        var (gridMin, gridMax) = (low - (span / 2), low + span + (span / 2));
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, n);
        var client = app.Client();
        for (var i = 0; i < n; i++)
        {
            await p.SubmitAsync(client, i, answers[i]);
        }
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });

        // The attacker is expert 0, whose answer is neither the lowest nor the highest.
        var form = await client.WithExpertToken(p.Members[0].Token).GetOk($"/api/expert/panels/{p.PanelId}");
        var formText = form.ToJsonString();
        var observed = form["questions"]![0]!["periods"]![0]!["feedback"]!;
        var own = answers[0];
        var others = answers.Skip(1).Order().ToArray();

        // No extreme of the group appears anywhere in the group feedback the expert can read.
        var feedbackNumbers = form["questions"]![0]!["periods"]!.AsArray().SelectMany(x => Numbers(x!["feedback"])).ToList();
        foreach (var extreme in new[] { answers.Min(), answers.Max() })
        {
            Assert.DoesNotContain(feedbackNumbers, v => v == extreme);
        }
        Assert.DoesNotContain("retained", formText, StringComparison.OrdinalIgnoreCase);

        var question = new Question { Id = p.PointQuestion, Format = ResponseFormat.Point };
        var settings = FeedbackCalculator.SettingsOf(new PanelSettings { OutlierRule = OutlierRuleSetting.TukeyFences, TrimFraction = 0.1, MinimumGroupSize = 3 });
        var observedMedian = (double?)observed["stats"]?["median"];
        // Compared as text in one canonical form (the API's type, written by the same serializer): the same test as comparing the JSON trees, many times faster.
        var observedText = JsonSerializer.Serialize(Api.Read<GroupFeedback>(observed.ToJsonString()), Api.Json);
        var observedQuartiles = Api.Read<GroupFeedback>(observed.ToJsonString()).Stats?.Spread;
        var consistent = new List<int[]>();
        foreach (var candidate in Multisets(n - 1, gridMin, gridMax))
        {
            var all = candidate.Append(own).ToArray();
            if (observedMedian is { } m && Median(all) != m)
            {
                continue;
            }
            // A quick filter on the shown quartiles first (the core's anonymous statistics on the bare values); the full comparison decides.
            if (observedQuartiles is { } oq && AnonymousFeedback.ForPoint(all.Select(v => (double)v).ToList(), settings)?.Spread is { } quick && (quick.Q1 != oq.Q1 || quick.Q3 != oq.Q3))
            {
                continue;
            }
            var counted = all.Select((v, i) => new CountedAnswer(i, question.Id, p.Periods[0], v, null, null, null, null)).ToList();
            var shown = GroupFeedback.From(FeedbackCalculator.Compute(question, p.Periods[0], counted, settings));
            if (string.Equals(JsonSerializer.Serialize(shown, Api.Json), observedText, StringComparison.Ordinal))
            {
                consistent.Add(candidate);
            }
        }

        // The attacker's model is right: the truth is among the candidates (else this test could not fail).
        Assert.Contains(consistent, c => c.SequenceEqual(others));
        Assert.True(consistent.Count > 1, $"n = {n}: the others' answers {string.Join(", ", others)} were rebuilt exactly.");
        Assert.True(consistent.Select(c => c.Min()).Distinct().Count() > 1, $"n = {n}: the lowest answer ({others.Min()}) was determined.");
        Assert.True(consistent.Select(c => c.Max()).Distinct().Count() > 1, $"n = {n}: the highest answer ({others.Max()}) was determined.");
        // Beyond the numbers shown, fewer than half of the others' answers are determined (on integer
        // answers an interpolated quantile can pin its pair; see AnonymousFeedback's remarks).
        var shownNumbers = Numbers(observed).ToHashSet();
        var determined = Enumerable.Range(0, n - 1).Where(k => consistent.Select(c => c[k]).Distinct().Count() == 1)
            .Select(k => (double)consistent[0][k]).Where(v => !shownNumbers.Contains(v)).ToList();
        Assert.True(determined.Count <= (n - 1) / 2, $"n = {n}: the answers {string.Join(", ", determined)} were determined beyond the shown statistics.");
    }

    /// <summary>Integers in low..low + span whose minimum and maximum are held by one expert each, expert 0 holding neither.</summary>
    private static int[] InventAnswers(int n, int seed, int low, int span)
    {
        var random = new Random(seed);
        while (true)
        {
            var a = Enumerable.Range(0, n).Select(_ => random.Next(low, low + span + 1)).ToArray();
            if (a.Count(x => x == a.Min()) == 1 && a.Count(x => x == a.Max()) == 1 && a[0] != a.Min() && a[0] != a.Max())
            {
                return a;
            }
        }
    }

    private static double Median(int[] values)
    {
        var s = values.Order().ToArray();
        return s.Length % 2 == 1 ? s[s.Length / 2] : (s[(s.Length / 2) - 1] + s[s.Length / 2]) / 2.0;
    }

    /// <summary>Every non-decreasing sequence of k integers in [lo, hi] (each multiset once).</summary>
    private static IEnumerable<int[]> Multisets(int k, int lo, int hi)
    {
        var current = Enumerable.Repeat(lo, k).ToArray();
        while (true)
        {
            yield return (int[])current.Clone();
            var i = k - 1;
            while (i >= 0 && current[i] == hi)
            {
                i--;
            }
            if (i < 0)
            {
                yield break;
            }
            current[i]++;
            for (var j = i + 1; j < k; j++)
            {
                current[j] = current[i];
            }
        }
    }

    private static IEnumerable<double> Numbers(JsonNode? node) => node switch
    {
        JsonObject o => o.SelectMany(kv => Numbers(kv.Value)),
        JsonArray a => a.SelectMany(Numbers),
        JsonValue v when v.TryGetValue<double>(out var d) => [d],
        _ => [],
    };
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteFeedbackAnonymityTests(SqliteFixture fixture) : FeedbackAnonymityTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresFeedbackAnonymityTests(PostgresFixture fixture) : FeedbackAnonymityTests(fixture);
