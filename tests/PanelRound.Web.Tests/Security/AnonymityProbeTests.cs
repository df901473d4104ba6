using System.Globalization;
using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// The anonymity promise, probed as each expert of a panel of eight over two rounds: everything
/// reachable with the expert's credential (the link's cookie on pages, the token header in the API)
/// is crawled, and no other expert's identity or individual answer may appear anywhere in it.
/// </summary>
public abstract partial class AnonymityProbeTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private const int Experts = 8;

    private static readonly string[] Periods = ["2027", "2028"];

    /// <summary>An expert as the panel knows them: identity, membership, link, and their answers per round.</summary>
    private sealed record Member(string Name, string Email, string Affiliation, int MembershipId, string Token, string Code)
    {
        public List<double> Answers { get; } = [];
    }

    /// <summary>
    /// Distinct, non-round answers: expert i's Point answer for period p in round r, and a range
    /// around it. The uneven steps between experts keep every answer at least 6 units from every
    /// other answer and from every statistic the feedback rules allow, histogram edges included
    /// (evenly spaced answers would put an edge on the lowest answer); checked below, so the probe
    /// cannot pass or fail by accident.
    /// </summary>
    private static readonly int[] Offsets = [0, 849, 1682, 2597, 3369, 3855, 4669, 5230];

    private static double Point(int i, int p, int r) => Math.Round(14_000 + Offsets[i] + (127 * p) + (65 * r) + 0.17 + (0.07 * i) + (0.31 * p), 2);

    private static (double P10, double P50, double P90) Range(int i, int p, int r)
    {
        var x = Point(i, p, r);
        return (Math.Round(x - 202.77 - (8.9 * i), 2), Math.Round(x + 32.23, 2), Math.Round(x + 361.03 + (3.2 * i), 2));
    }

    /// <summary>Rationales whose alphabetical order is neither the membership order nor the submission order.</summary>
    private static readonly string[] Rationales =
    [
        "Permits in the harbour quarter are slowing.",
        "Construction costs keep rising faster than rents.",
        "Absorption of new-build units stays strong.",
        "Lenders tightened loan-to-value ratios this year.",
        "Vacancy along the tram line is falling.",
        "Buyers from inland towns keep arriving.",
        "Interest rates look set to ease slowly.",
        "Supply from the dock conversions peaks in 2027.",
    ];

    /// <summary>The order the experts submit in (round 1 and round 2 differ), so that submission order is not membership order.</summary>
    private static readonly int[][] SubmissionOrder = [[3, 0, 6, 1, 7, 2, 5, 4], [5, 2, 7, 0, 4, 6, 1, 3]];

    [SkippableFact]
    public async Task EveryExpert_CrawlsEverythingReachable_SeesNoOtherExpertsIdentityOrAnswer()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var (panelA, questions, members) = await CreatePanelAsync(staff, "Harbour outlook", "A", Experts);
        var (panelB, _, others) = await CreatePanelAsync(staff, "Inland outlook", "B", 3);

        // Round 1: everyone answers, in an order that is not the membership order.
        foreach (var i in SubmissionOrder[0])
        {
            await SubmitAsync(app, panelA, questions, members[i], i, round: 1);
        }
        await staff.PostOk($"/api/panels/{panelA}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelA}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });

        // Round 2, open: seven have revised; expert 6 has not yet. Every page and API answer is crawled as each expert.
        foreach (var i in SubmissionOrder[1].Where(i => i != 6))
        {
            await SubmitAsync(app, panelA, questions, members[i], i, round: 2);
        }
        var stats = new CrawlStats();
        await ProbeAllAsync(app, panelA, panelB, members, others, stats, roundShown: 1);

        // Round 2 closed and the panel concluded: the last round's feedback and the read-only form, crawled again.
        await SubmitAsync(app, panelA, questions, members[6], 6, round: 2);
        await staff.PostOk($"/api/panels/{panelA}/rounds/2/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelA}/conclude", new { }, HttpStatusCode.OK);
        await ProbeAllAsync(app, panelA, panelB, members, others, stats, roundShown: 2);

        Console.WriteLine($"Anonymity probe ({Provider}): {stats.Pages} pages and {stats.ApiResponses} API responses crawled as {Experts} experts in two panel states; "
            + $"{stats.Refused} of the API calls refused (staff routes, other panels' and memberships' ids).");
        Assert.True(stats.Pages >= Experts * 2 * 3, $"Only {stats.Pages} pages crawled.");
        Assert.True(stats.OwnFormsRead == Experts * 2 * 2, $"The expert API's form was read {stats.OwnFormsRead} times.");
    }

    private sealed class CrawlStats
    {
        public int Pages { get; set; }

        public int ApiResponses { get; set; }

        public int Refused { get; set; }

        public int OwnFormsRead { get; set; }
    }

    private static async Task ProbeAllAsync(TestApp app, int panelA, int panelB, List<Member> members, List<Member> others, CrawlStats stats, int roundShown)
    {
        AssertAnswersDistinct(members);
        for (var e = 0; e < members.Count; e++)
        {
            var me = members[e];
            var strangers = members.Where(m => m != me).Concat(others).ToList();
            var leaks = new List<string>();

            // What the group-feedback rules allow this expert to see: their own answers and the shown statistics.
            var form = await app.Client().WithExpertToken(me.Token).GetAs<ExpertForm>($"/api/expert/panels/{panelA}");
            Assert.Equal(roundShown, form.FeedbackRound);
            var shown = ShownStatistics(form).ToList();
            Assert.NotEmpty(shown);
            foreach (var (x, s) in strangers.SelectMany(s => s.Answers.Select(x => (x, s))).Where(a => shown.Any(v => Math.Abs(v - a.x) < 1)))
            {
                leaks.Add($"a shown statistic equals the answer {x.Invariant()} of {s.Code}");
            }
            AssertRationalesUnattributed(form, roundShown);

            // Pages: the link exchanged for the cookie, every link on every page followed.
            var browser = app.Client();
            var visited = new HashSet<string>(StringComparer.Ordinal);
            var queue = new Queue<string>([$"/e/{me.Token}"]);
            while (queue.TryDequeue(out var url))
            {
                if (!visited.Add(url))
                {
                    continue;
                }
                using var response = await browser.GetAsync(url);
                var text = await response.Content.ReadAsStringAsync();
                stats.Pages++;
                Assert.True((int)response.StatusCode < 500, $"GET {url} as expert {e}: {(int)response.StatusCode}");
                leaks.AddRange(Leaks($"page {url}", text, me, strangers, isJson: false));
                if (response.Headers.Location is { } location && SameSite(location.OriginalString) is { } next)
                {
                    queue.Enqueue(next);
                }
                foreach (Match m in LinkAttribute().Matches(text))
                {
                    if (SameSite(WebUtility.HtmlDecode(m.Groups[1].Value)) is { } link)
                    {
                        queue.Enqueue(link);
                    }
                }
            }
            Assert.Contains("/expert", visited);

            // The API: every GET in the OpenAPI document, with the ids this expert can see and with others', by header and by cookie.
            var api = app.Client().WithExpertToken(me.Token);
            var document = JsonNode.Parse(await api.GetTextOk("/openapi/v1.json"))!;
            stats.ApiResponses++;
            var ids = new Dictionary<string, int[]>(StringComparer.OrdinalIgnoreCase)
            {
                ["id"] = [panelA, panelB, 0, -1],
                ["panelId"] = [panelA, panelB, 0, -1],
                ["membershipId"] = [me.MembershipId, .. strangers.Select(s => s.MembershipId), 0],
                ["number"] = [1, 2, 3],
                ["questionId"] = [1, 2, 3, 4],
            };
            foreach (var path in document["paths"]!.AsObject().Where(p => p.Value!["get"] is not null).Select(p => p.Key))
            {
                foreach (var url in Expand(path, ids))
                {
                    foreach (var client in new[] { api, browser })
                    {
                        using var response = await client.GetAsync(url);
                        var bytes = await response.Content.ReadAsByteArrayAsync();
                        stats.ApiResponses++;
                        var status = (int)response.StatusCode;
                        Assert.True(status < 500, $"GET {url} as expert {e}: {status}");
                        var type = response.Content.Headers.ContentType?.MediaType ?? "";
                        if (status is >= 400)
                        {
                            stats.Refused++;
                        }
                        else
                        {
                            Assert.True(type.Contains("json", StringComparison.Ordinal) || type.StartsWith("text/", StringComparison.Ordinal),
                                $"GET {url} as expert {e} answered a file ({type}): an expert reaches no export.");
                        }
                        if (status == 200 && url.Contains("/expert/panels/", StringComparison.Ordinal))
                        {
                            stats.OwnFormsRead++;
                        }
                        var text = System.Text.Encoding.UTF8.GetString(bytes);
                        leaks.AddRange(Leaks($"GET {url}", text, me, strangers, isJson: type.Contains("json", StringComparison.Ordinal)));
                    }
                }
            }
            Assert.True(leaks.Count == 0, $"Expert {e} ({me.Code}) saw what belongs to others:\n" + string.Join('\n', leaks.Distinct().Take(40)));
        }
    }

    /// <summary>Every way a response could show a stranger: identity, panel code, membership id, or an individual answer.</summary>
    private static IEnumerable<string> Leaks(string where, string text, Member me, List<Member> strangers, bool isJson)
    {
        var numbers = Numbers(text);
        foreach (var s in strangers)
        {
            foreach (var (what, value) in new[] { ("name", s.Name), ("email", s.Email), ("affiliation", s.Affiliation), ("panel code", s.Code) })
            {
                if (text.Contains(value, StringComparison.OrdinalIgnoreCase))
                {
                    yield return $"{where}: {what} '{value}'";
                }
            }
            foreach (var x in s.Answers)
            {
                foreach (var (value, decimals, at) in numbers.Where(n => Math.Abs(n.Value - x) <= (0.5 * Math.Pow(10, -n.Decimals)) + 1e-9))
                {
                    yield return $"{where}: the answer {x.Invariant()} of {s.Code} shown as {value.Invariant()} in '{text[Math.Max(0, at - 80)..Math.Min(text.Length, at + 40)]}'";
                }
            }
        }
        if (isJson)
        {
            foreach (var (key, value) in Properties(text))
            {
                var k = key.ToLowerInvariant();
                if (k.Contains("membership", StringComparison.Ordinal) && value is JsonValue v && v.TryGetValue<int>(out var id) && id != me.MembershipId)
                {
                    yield return $"{where}: {key} = {id}, not the expert's own membership";
                }
                if (k is "expertid" or "expert" or "expertname" or "email" or "affiliation")
                {
                    yield return $"{where}: a property '{key}'";
                }
            }
        }
        else
        {
            foreach (Match m in MembershipMention().Matches(text))
            {
                if (m.Groups[1].Value != me.MembershipId.Invariant())
                {
                    yield return $"{where}: '{m.Value}'";
                }
            }
        }
    }

    /// <summary>
    /// Every number in a text with the decimals it is shown with: thousands grouped by a comma,
    /// space or apostrophe or not grouped, decimals after a point or a comma. A shown number equals
    /// an answer when the answer rounds to it at the shown precision.
    /// </summary>
    private static List<(double Value, int Decimals, int At)> Numbers(string text)
    {
        var found = new List<(double, int, int)>();
        foreach (Match m in NumberToken().Matches(text))
        {
            var whole = m.Groups["whole"].Value.Replace(",", "", StringComparison.Ordinal).Replace(" ", "", StringComparison.Ordinal)
                .Replace("\u00A0", "", StringComparison.Ordinal).Replace("\u202F", "", StringComparison.Ordinal).Replace("'", "", StringComparison.Ordinal);
            var fraction = m.Groups["fraction"].Value;
            if (double.TryParse(fraction.Length == 0 ? whole : $"{whole}.{fraction}", NumberStyles.Float, CultureInfo.InvariantCulture, out var v))
            {
                found.Add((v, fraction.Length, m.Index));
            }
        }
        return found;
    }

    /// <summary>Every statistic the feedback rules let an expert see (median, quartiles, relative IQR, band, histogram edges and counts).</summary>
    private static IEnumerable<double> ShownStatistics(ExpertForm form)
    {
        foreach (var s in form.Questions.SelectMany(q => q.Periods).Select(p => p.Feedback?.Stats).OfType<PanelRound.Core.Statistics.AnonymousFeedback>())
        {
            yield return s.Median;
            if (s.Spread is { } sp)
            {
                yield return sp.Q1;
                yield return sp.Q3;
                foreach (var v in new[] { sp.RelativeIqr, sp.BandP10, sp.BandP90 }.OfType<double>())
                {
                    yield return v;
                }
                foreach (var edge in sp.Histogram.Edges)
                {
                    yield return edge;
                }
            }
        }
    }

    /// <summary>
    /// The test's own precondition: all answers are at least 2 units apart, so that an expert's own
    /// answer never looks like another's, and a number that rounds to another's answer is that answer.
    /// </summary>
    private static void AssertAnswersDistinct(List<Member> members)
    {
        var all = members.SelectMany(m => m.Answers).Order().ToList();
        var close = all.Zip(all.Skip(1)).Where(p => p.Second - p.First < 2).ToList();
        Assert.True(close.Count == 0, "Test values too close: " + string.Join(", ", close.Select(p => $"{p.First.Invariant()}/{p.Second.Invariant()}")));
    }

    /// <summary>The rationales shown are the texts as written, none with an author, in alphabetical order (not membership or submission order).</summary>
    private static void AssertRationalesUnattributed(ExpertForm form, int round)
    {
        var submitted = Rationales.Select(r => $"{r} (round {round})").ToList();
        var alphabetical = submitted.Order(StringComparer.Ordinal).ToList();
        var byMembership = submitted.ToList();
        var bySubmission = SubmissionOrder[round - 1].Select(i => submitted[i]).ToList();
        Assert.NotEqual(byMembership, alphabetical);
        Assert.NotEqual(bySubmission, alphabetical);
        foreach (var q in form.Questions)
        {
            Assert.Equal(alphabetical, q.Rationales);
        }
    }

    private static IEnumerable<string> Expand(string template, Dictionary<string, int[]> ids)
    {
        var names = RouteParameter().Matches(template).Select(m => m.Groups[1].Value).Distinct().ToList();
        IEnumerable<Dictionary<string, int>> combos = [new Dictionary<string, int>(StringComparer.OrdinalIgnoreCase)];
        foreach (var name in names)
        {
            var values = ids.TryGetValue(name, out var v) ? v : [1];
            combos = combos.SelectMany(c => values.Select(x => new Dictionary<string, int>(c, StringComparer.OrdinalIgnoreCase) { [name] = x }));
        }
        return combos.Select(c => RouteParameter().Replace(template, m => c[m.Groups[1].Value].Invariant()));
    }

    private static IEnumerable<(string Key, JsonNode? Value)> Properties(string json)
    {
        JsonNode? root;
        try
        {
            root = JsonNode.Parse(json);
        }
        catch (JsonException)
        {
            yield break;
        }
        var stack = new Stack<JsonNode?>([root]);
        while (stack.TryPop(out var node))
        {
            if (node is JsonObject o)
            {
                foreach (var (k, v) in o)
                {
                    yield return (k, v);
                    stack.Push(v);
                }
            }
            else if (node is JsonArray a)
            {
                foreach (var v in a)
                {
                    stack.Push(v);
                }
            }
        }
    }

    /// <summary>A link within the site (no scheme, no other host), without its fragment; null for anything else.</summary>
    private static string? SameSite(string href)
    {
        if (href.StartsWith("http://localhost", StringComparison.OrdinalIgnoreCase))
        {
            href = new Uri(href).PathAndQuery;
        }
        if (!href.StartsWith('/') || href.StartsWith("//", StringComparison.Ordinal))
        {
            return null;
        }
        return href.Split('#')[0];
    }

    private static async Task<(int Panel, int[] Questions, List<Member> Members)> CreatePanelAsync(HttpClient staff, string title, string tag, int experts)
    {
        var key = $"probe-{tag.ToLowerInvariant()}-{Guid.NewGuid():N}"[..20];
        var indicator = (int)(await staff.PostOk("/api/indicators", new { key, name = $"Apartment price, {title}", unitLabel = "EUR/m²", decimals = 2 }))["id"]!;
        await staff.PostOk($"/api/indicators/{indicator}/observations",
            new[] { new { period = "2023", value = 11_800.0, source = "probe" }, new { period = "2024", value = 12_350.0, source = "probe" }, new { period = "2025", value = 12_900.0, source = "probe" } },
            HttpStatusCode.OK);
        var panel = (int)(await staff.PostOk("/api/panels", new
        {
            title, brief = "Prices per square metre, Calderport.", startsOn = "2026-11-02", targetPeriods = "2027-2028",
            settings = new { outlierRule = "TukeyFences", trimFraction = 0.1, minimumGroupSize = 3, outliersMustJustify = false, showRationales = true },
        }))["id"]!;
        var point = (int)(await staff.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price", format = "Point" }))["id"]!;
        var range = (int)(await staff.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price band", format = "Range" }))["id"]!;
        var members = new List<Member>();
        for (var i = 0; i < experts; i++)
        {
            // Invented people with names that no page text could contain by chance.
            var name = $"{Given[i % Given.Length]} Quillfeather-{tag}{i}";
            var email = $"q{tag.ToLowerInvariant()}{i}.quillfeather@probe-experts.example";
            var affiliation = $"Saltmarsh Survey House {tag}{i}";
            var e = await staff.PostOk("/api/experts", new { name, email, affiliation });
            var link = await staff.PostOk($"/api/panels/{panel}/members", new { expertId = (int)e["id"]!, sendInvitation = false });
            members.Add(new Member(name, email, affiliation, (int)link["membershipId"]!, (string)link["token"]!, (string)link["panelCode"]!));
        }
        await staff.PostOk($"/api/panels/{panel}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        return (panel, [point, range], members);
    }

    private static readonly string[] Given = ["Aldith", "Berengar", "Clemence", "Dunstan", "Eluned", "Fenwick", "Gisela", "Hamund"];

    private static async Task SubmitAsync(TestApp app, int panel, int[] questions, Member m, int i, int round)
    {
        var rationale = $"{Rationales[i]} (round {round})";
        var body = new
        {
            draft = false,
            answers = new object[]
            {
                new { questionId = questions[0], rationale, periods = Periods.Select((p, pi) => new { period = p, value = Point(i, pi, round) }).ToArray() },
                new { questionId = questions[1], rationale, periods = Periods.Select((p, pi) => Range(i, pi, round)).Select((r, pi) => new { period = Periods[pi], p10 = r.P10, p50 = r.P50, p90 = r.P90 }).ToArray() },
            },
        };
        await app.Client().WithExpertToken(m.Token).PostOk($"/api/expert/panels/{panel}/estimates", body, HttpStatusCode.OK);
        for (var pi = 0; pi < Periods.Length; pi++)
        {
            var r = Range(i, pi, round);
            m.Answers.AddRange([Point(i, pi, round), r.P10, r.P50, r.P90]);
        }
    }

    [GeneratedRegex(@"(?<![\w.])(?<whole>\d{1,3}(?:[,\u00A0\u202F' ]\d{3})+|\d+)(?:[.,](?<fraction>\d+))?(?!\w)")]
    private static partial Regex NumberToken();

    [GeneratedRegex("(?:href|src|action)=\"([^\"]*)\"")]
    private static partial Regex LinkAttribute();

    [GeneratedRegex(@"(?i)membership\w*\W{1,5}(\d+)")]
    private static partial Regex MembershipMention();

    [GeneratedRegex(@"\{\*?([A-Za-z_][A-Za-z0-9_]*)[^}]*\}")]
    private static partial Regex RouteParameter();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteAnonymityProbeTests(SqliteFixture fixture) : AnonymityProbeTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresAnonymityProbeTests(PostgresFixture fixture) : AnonymityProbeTests(fixture);
