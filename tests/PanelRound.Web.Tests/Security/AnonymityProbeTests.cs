using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// The anonymity promise, probed as each expert of a panel of eight over two rounds: everything
/// reachable with the expert's credential (the link's cookie on pages, the token header in the API)
/// is crawled, and no other expert's identity or individual answer may appear anywhere in it.
/// The panel also carries calibration questions (set up as the demo's are: Range, one period, true
/// values recorded after round 1 closed, scores and weights computed, calibration-question weights
/// for the consensus), interleaved with ordinary single-period Range questions on the same
/// indicator: nothing reachable may show a score, a true value, or anything that tells the
/// calibration questions from the ordinary ones.
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

    /// <summary>
    /// A single-period Range question of panel A: the calibration questions (period 2026, the year the panel starts in)
    /// and ordinary ones (period 2027), interleaved, on one indicator. Expert i's answer to the k-th is expert i's
    /// first-period range of the price question shifted by 16,000 + 10,000·k, so each question's answers lie apart from
    /// every other question's and keep the spacing that the statistics avoid.
    /// </summary>
    private sealed record SinglePeriodQuestion(int Id, bool Calibration, int Shift, double? Truth)
    {
        public string Period => Calibration ? "2026" : "2027";

        public (double P10, double P50, double P90) Answer(int i, int round)
        {
            var (p10, p50, p90) = Range(i, 0, round);
            var d = 16_000 + (10_000 * Shift);
            return (Math.Round(p10 + d, 2), Math.Round(p50 + d, 2), Math.Round(p90 + d, 2));
        }
    }

    /// <summary>The layout of panel A by question order: P = the Point question, R = the two-period Range question, C = calibration, O = ordinary single-period.</summary>
    private const string Layout = "PCROCOC";

    /// <summary>The true values of the calibration questions (before the question's shift): inside one or two experts' bands, far from every answer and statistic (checked).</summary>
    private static readonly double[] TruthBases = [17_620.37, 15_402.13, 19_000.55];

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
        var (panelA, questions, members) = await CreatePanelAsync(staff, "Harbour outlook", "A", Experts, withCalibration: true);
        var (panelB, _, others) = await CreatePanelAsync(staff, "Inland outlook", "B", 3, withCalibration: false);

        // Round 1: everyone answers, in an order that is not the membership order.
        foreach (var i in SubmissionOrder[0])
        {
            await SubmitAsync(app, panelA, questions, members[i], i, round: 1);
        }
        await staff.PostOk($"/api/panels/{panelA}/rounds/1/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelA}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });

        // The true values become known while round 2 is open; the experts are scored on round 1 at once.
        var secrets = await RecordTruthsAsync(staff, panelA, questions, members, scoredRound: 1);

        // Round 2, open: seven have revised; expert 6 has not yet. Every page and API answer is crawled as each expert.
        foreach (var i in SubmissionOrder[1].Where(i => i != 6))
        {
            await SubmitAsync(app, panelA, questions, members[i], i, round: 2);
        }
        var stats = new CrawlStats();
        await ProbeAllAsync(app, panelA, panelB, members, others, stats, roundShown: 1, secrets);

        // Round 2 closed and the panel concluded (with calibration-question weights): the last round's feedback and the
        // read-only form, crawled again, with the scores now from round 2.
        await SubmitAsync(app, panelA, questions, members[6], 6, round: 2);
        await staff.PostOk($"/api/panels/{panelA}/rounds/2/close", new { }, HttpStatusCode.OK);
        await staff.PostOk($"/api/panels/{panelA}/conclude", new { }, HttpStatusCode.OK);
        secrets = await ScoresAsync(staff, panelA, secrets, scoredRound: 2);
        var consensus = (await staff.GetOk($"/api/panels/{panelA}/consensus")).AsArray();
        Assert.Contains(consensus, c => ((string)c!["method"]!).StartsWith("Calibration", StringComparison.Ordinal));
        await ProbeAllAsync(app, panelA, panelB, members, others, stats, roundShown: 2, secrets);

        Console.WriteLine($"Anonymity probe ({Provider}): {stats.Pages} pages and {stats.ApiResponses} API responses crawled as {Experts} experts in two panel states; "
            + $"{stats.Refused} of the API calls refused (staff routes, other panels' and memberships' ids); "
            + $"{stats.CalibrationChecks} responses checked for {secrets.Scores.Count} calibration figures and {secrets.Truths.Count} true values.");
        Assert.True(stats.Pages >= Experts * 2 * 3, $"Only {stats.Pages} pages crawled.");
        Assert.True(stats.OwnFormsRead == Experts * 2 * 2, $"The expert API's form was read {stats.OwnFormsRead} times.");
        Assert.True(stats.CardsCompared == Experts * 2, $"The form's question markup was compared {stats.CardsCompared} times.");
    }

    /// <summary>What an expert must never see of the calibration machinery: the true values, every score and weight, and which questions are calibration questions.</summary>
    private sealed record CalibrationSecrets(
        IReadOnlyList<int> QuestionOrder, IReadOnlyList<SinglePeriodQuestion> SinglePeriod, IReadOnlyList<double> Truths, IReadOnlyList<double> Scores);

    /// <summary>Records the true values through the API (the facilitator's way) and reads the scores the staff see.</summary>
    private static async Task<CalibrationSecrets> RecordTruthsAsync(HttpClient staff, int panel, ProbeQuestions questions, List<Member> members, int scoredRound)
    {
        var truths = new List<double>();
        foreach (var q in questions.SinglePeriod.Where(q => q.Calibration))
        {
            using var r = await staff.PutAsJsonAsync($"/api/panels/{panel}/questions/{q.Id}/true-value", new { value = q.Truth!.Value }, Api.Json);
            Assert.True(r.IsSuccessStatusCode, await r.Content.ReadAsStringAsync());
            truths.Add(q.Truth.Value);
        }
        // The test's own precondition: every true value lies at least 6 units from every answer, so a number near it is it.
        var close = truths.SelectMany(t => members.SelectMany(m => m.Answers).Where(a => Math.Abs(a - t) < 6).Select(a => $"{t.Invariant()}/{a.Invariant()}")).ToList();
        Assert.True(close.Count == 0, "Test values too close: " + string.Join(", ", close));
        return await ScoresAsync(staff, panel, new CalibrationSecrets(questions.Order, questions.SinglePeriod, truths, []), scoredRound);
    }

    /// <summary>The scores, weights and combinations the staff's calibration view shows, as numbers that must not reach an expert.</summary>
    private static async Task<CalibrationSecrets> ScoresAsync(HttpClient staff, int panel, CalibrationSecrets known, int scoredRound)
    {
        var view = await staff.GetAs<PanelCalibrationView>($"/api/panels/{panel}/calibration");
        Assert.Null(view.Status);
        Assert.Equal(scoredRound, view.Settings.RoundNumber);
        Assert.Equal(Experts, view.Experts.Count);
        Assert.Contains(view.Experts, e => e.Weight > 0);
        var scores = view.Experts.SelectMany(e => new[] { e.Statistic, e.Calibration, e.Information, e.Weight })
            .Concat(new[] { view.Weighted, view.Equal }.OfType<CombinationLine>().SelectMany(c => new[] { c.Calibration, c.Information, c.Combined }))
            .Append(view.Settings.CutoffUsed ?? 0)
            .Concat(known.Scores)
            // 0 and 1 are everywhere on a page; the figures that can be told apart are the others.
            .Where(v => v is not 0 and not 1).Distinct().ToList();
        return known with { Scores = scores };
    }

    private sealed class CrawlStats
    {
        public int Pages { get; set; }

        public int ApiResponses { get; set; }

        public int Refused { get; set; }

        public int OwnFormsRead { get; set; }

        public int CalibrationChecks { get; set; }

        public int CardsCompared { get; set; }
    }

    private static async Task ProbeAllAsync(
        TestApp app, int panelA, int panelB, List<Member> members, List<Member> others, CrawlStats stats, int roundShown, CalibrationSecrets secrets)
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
            // The test's own precondition: no shown statistic lies near a true value, so a number near one is the true value.
            Assert.DoesNotContain(shown, v => secrets.Truths.Any(t => Math.Abs(v - t) < 6));

            // The form in the API: the facilitator's question order (calibration questions interleaved, not moved), and each
            // calibration question shaped exactly like the ordinary single-period questions.
            var formJson = await app.Client().WithExpertToken(me.Token).GetTextOk($"/api/expert/panels/{panelA}");
            leaks.AddRange(CalibrationMarks("the form (API)", QuestionFeatures(formJson), form.Questions.Select(q => q.Id).ToList(), secrets));

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
                leaks.AddRange(CalibrationLeaks($"page {url}", url, text, secrets, stats));
                if (url == "/expert" && response.IsSuccessStatusCode)
                {
                    var cards = CardFeatures(text, form);
                    leaks.AddRange(CalibrationMarks("the form (page)", cards, [.. cards.Keys], secrets));
                    stats.CardsCompared++;
                }
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
                        // The OpenAPI document describes the staff's API to anyone; it holds no panel's data.
                        if (url != "/openapi/v1.json")
                        {
                            leaks.AddRange(CalibrationLeaks($"GET {url}", url, text, secrets, stats));
                        }
                    }
                }
            }
            Assert.True(leaks.Count == 0, $"Expert {e} ({me.Code}) saw what belongs to others or to the staff:\n" + string.Join('\n', leaks.Distinct().Take(40)));
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

    /// <summary>A panel's questions: the two-period Point and Range questions, and (panel A) the single-period Range questions in <see cref="Layout"/> order.</summary>
    private sealed record ProbeQuestions(int Point, int Range, IReadOnlyList<SinglePeriodQuestion> SinglePeriod, IReadOnlyList<int> Order);

    private static async Task<(int Panel, ProbeQuestions Questions, List<Member> Members)> CreatePanelAsync(
        HttpClient staff, string title, string tag, int experts, bool withCalibration)
    {
        var key = $"probe-{tag.ToLowerInvariant()}-{Guid.NewGuid():N}"[..20];
        var indicator = (int)(await staff.PostOk("/api/indicators", new { key, name = $"Apartment price, {title}", unitLabel = "EUR/m²", decimals = 2 }))["id"]!;
        await staff.PostOk($"/api/indicators/{indicator}/observations",
            new[] { new { period = "2023", value = 11_800.0, source = "probe" }, new { period = "2024", value = 12_350.0, source = "probe" }, new { period = "2025", value = 12_900.0, source = "probe" } },
            HttpStatusCode.OK);
        var panel = (int)(await staff.PostOk("/api/panels", new
        {
            title, brief = "Prices per square metre, Calderport.", startsOn = "2026-11-02", targetPeriods = "2027-2028",
            settings = new
            {
                outlierRule = "TukeyFences", trimFraction = 0.1, minimumGroupSize = 3, outliersMustJustify = false, showRationales = true,
                weighting = withCalibration ? "Calibration" : "Equal",
            },
        }))["id"]!;
        var volume = 0;
        if (withCalibration)
        {
            volume = (int)(await staff.PostOk("/api/indicators", new { key = key[..^1] + "v", name = $"Transaction volume, {title}", unitLabel = "EUR m", decimals = 2 }))["id"]!;
            await staff.PostOk($"/api/indicators/{volume}/observations",
                new[] { new { period = "2023", value = 610.0, source = "probe" }, new { period = "2024", value = 655.0, source = "probe" }, new { period = "2025", value = 702.0, source = "probe" } },
                HttpStatusCode.OK);
        }
        int point = 0, range = 0;
        var single = new List<SinglePeriodQuestion>();
        var order = new List<int>();
        foreach (var kind in withCalibration ? Layout : "PR")
        {
            int id;
            switch (kind)
            {
                case 'P':
                    id = point = (int)(await staff.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price", format = "Point" }))["id"]!;
                    break;
                case 'R':
                    id = range = (int)(await staff.PostOk($"/api/panels/{panel}/questions", new { indicatorId = indicator, label = "Price band", format = "Range" }))["id"]!;
                    break;
                default:
                    // Labels alike for both kinds: a district name, nothing about the period or the kind.
                    var calibration = kind == 'C';
                    var n = single.Count;
                    id = (int)(await staff.PostOk($"/api/panels/{panel}/questions", new
                    {
                        indicatorId = volume, label = $"Transaction volume, {Districts[n]}", format = "Range",
                        targetPeriods = calibration ? "2026" : "2027", calibration,
                    }))["id"]!;
                    single.Add(new SinglePeriodQuestion(id, calibration, n, calibration ? Math.Round(TruthBases[single.Count(q => q.Calibration)] + 16_000 + (10_000 * n), 2) : null));
                    break;
            }
            order.Add(id);
        }
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
        return (panel, new ProbeQuestions(point, range, single, order), members);
    }

    private static readonly string[] Given = ["Aldith", "Berengar", "Clemence", "Dunstan", "Eluned", "Fenwick", "Gisela", "Hamund"];

    private static readonly string[] Districts = ["Old Harbour", "Millbrook", "Dockside", "Tannery Row", "Saltgate"];

    private static async Task SubmitAsync(TestApp app, int panel, ProbeQuestions questions, Member m, int i, int round)
    {
        var rationale = $"{Rationales[i]} (round {round})";
        var answers = new List<object>
        {
            new { questionId = questions.Point, rationale, periods = Periods.Select((p, pi) => new { period = p, value = Point(i, pi, round) }).ToArray() },
            new { questionId = questions.Range, rationale, periods = Periods.Select((p, pi) => Range(i, pi, round)).Select((r, pi) => new { period = Periods[pi], p10 = r.P10, p50 = r.P50, p90 = r.P90 }).ToArray() },
        };
        foreach (var q in questions.SinglePeriod)
        {
            var (p10, p50, p90) = q.Answer(i, round);
            answers.Add(new { questionId = q.Id, rationale, periods = new[] { new { period = q.Period, p10, p50, p90 } } });
            m.Answers.AddRange([p10, p50, p90]);
        }
        await app.Client().WithExpertToken(m.Token).PostOk($"/api/expert/panels/{panel}/estimates", new { draft = false, answers }, HttpStatusCode.OK);
        for (var pi = 0; pi < Periods.Length; pi++)
        {
            var r = Range(i, pi, round);
            m.Answers.AddRange([Point(i, pi, round), r.P10, r.P50, r.P90]);
        }
    }

    /// <summary>
    /// The calibration machinery in a response: the words that name it, a true value, or a score or weight (at the
    /// precision shown, from three decimals, or written in full). A refusal's echo of the requested path is not counted.
    /// </summary>
    private static IEnumerable<string> CalibrationLeaks(string where, string url, string text, CalibrationSecrets secrets, CrawlStats stats)
    {
        stats.CalibrationChecks++;
        var body = text.Replace(url, "", StringComparison.Ordinal).Replace(url.Split('?')[0], "", StringComparison.Ordinal);
        foreach (Match m in MachineryWord().Matches(body))
        {
            yield return $"{where}: the word '{m.Value}' in '{Around(body, m.Index)}'";
        }
        var numbers = Numbers(body);
        foreach (var t in secrets.Truths)
        {
            foreach (var (value, _, at) in numbers.Where(n => Math.Abs(n.Value - t) <= (0.5 * Math.Pow(10, -n.Decimals)) + 1e-9))
            {
                yield return $"{where}: the true value {t.Invariant()} shown as {value.Invariant()} in '{Around(body, at)}'";
            }
        }
        foreach (var score in secrets.Scores)
        {
            if (body.Contains(score.Invariant(), StringComparison.Ordinal))
            {
                yield return $"{where}: the score {score.Invariant()} written in full";
            }
            foreach (var (value, _, at) in numbers.Where(n => n.Decimals >= 3 && Math.Abs(n.Value - score) <= (0.5 * Math.Pow(10, -n.Decimals)) + 1e-12))
            {
                yield return $"{where}: the score {score.Invariant()} shown as {value.Invariant()} in '{Around(body, at)}'";
            }
        }
    }

    private static string Around(string text, int at) => text[Math.Max(0, at - 80)..Math.Min(text.Length, at + 40)];

    /// <summary>
    /// What tells the calibration questions apart in a form: the questions not in the facilitator's order, or a calibration
    /// question whose features (every tag, attribute, class and text with its label and numbers blanked; or every JSON
    /// property with its kind) differ from an ordinary single-period question's.
    /// </summary>
    private static IEnumerable<string> CalibrationMarks(string where, IReadOnlyDictionary<int, HashSet<string>> features, IReadOnlyList<int> shownOrder, CalibrationSecrets secrets)
    {
        if (!shownOrder.SequenceEqual(secrets.QuestionOrder))
        {
            yield return $"{where}: questions shown in the order {string.Join(",", shownOrder)}, not the facilitator's {string.Join(",", secrets.QuestionOrder)}";
        }
        var ordinary = secrets.SinglePeriod.Where(q => !q.Calibration).Select(q => features[q.Id]).ToList();
        // The test's own precondition: the ordinary single-period questions look alike, so a difference is the kind's.
        Assert.All(ordinary, o => Assert.True(o.SetEquals(ordinary[0]), $"{where}: the ordinary questions differ: {string.Join(" | ", o.Except(ordinary[0]).Concat(ordinary[0].Except(o)).Take(10))}"));
        foreach (var c in secrets.SinglePeriod.Where(q => q.Calibration))
        {
            var only = features[c.Id].Except(ordinary[0]).ToList();
            var missing = ordinary[0].Except(features[c.Id]).ToList();
            if (only.Count > 0 || missing.Count > 0)
            {
                yield return $"{where}: calibration question {c.Id} differs from the ordinary ones: only it has [{string.Join(" | ", only.Take(8))}], it lacks [{string.Join(" | ", missing.Take(8))}]";
            }
        }
    }

    /// <summary>The features of each question object of the expert form's JSON, by question id, in the order given.</summary>
    private static Dictionary<int, HashSet<string>> QuestionFeatures(string json)
    {
        var result = new Dictionary<int, HashSet<string>>();
        foreach (var q in JsonNode.Parse(json)!["questions"]!.AsArray())
        {
            var label = (string)q!["label"]!;
            var features = new HashSet<string>(StringComparer.Ordinal);
            var stack = new Stack<(string Path, JsonNode? Node)>([("", q)]);
            while (stack.TryPop(out var item))
            {
                switch (item.Node)
                {
                    case JsonObject o:
                        features.Add(item.Path + "{}");
                        foreach (var (k, v) in o)
                        {
                            stack.Push(($"{item.Path}.{k}", v));
                        }
                        break;
                    case JsonArray a:
                        features.Add(item.Path + "[]");
                        foreach (var v in a)
                        {
                            stack.Push((item.Path + "[]", v));
                        }
                        break;
                    case JsonValue v when v.GetValueKind() == JsonValueKind.String:
                        features.Add($"{item.Path}=\"{Blank((string)v!, label)}\"");
                        break;
                    case JsonValue v when v.GetValueKind() == JsonValueKind.Number:
                        features.Add($"{item.Path}=#");
                        break;
                    default:
                        features.Add($"{item.Path}={item.Node?.ToJsonString() ?? "null"}");
                        break;
                }
            }
            result[(int)q["id"]!] = features;
        }
        return result;
    }

    /// <summary>The features of each question's card on the expert's page, by question id, in page order.</summary>
    private static Dictionary<int, HashSet<string>> CardFeatures(string html, ExpertForm form)
    {
        var result = new Dictionary<int, HashSet<string>>();
        foreach (Match card in CardStart().Matches(html))
        {
            // The card runs to the </div> that closes its opening <div>.
            var depth = 0;
            var end = card.Index;
            foreach (Match tag in DivTag().Matches(html, card.Index))
            {
                depth += tag.Value.StartsWith("</", StringComparison.Ordinal) ? -1 : 1;
                if (depth == 0)
                {
                    end = tag.Index + tag.Length;
                    break;
                }
            }
            var text = html[card.Index..end];
            var id = int.Parse(QuestionIdInput().Match(text).Groups[1].Value, CultureInfo.InvariantCulture);
            var label = WebUtility.HtmlEncode(form.Questions.Single(q => q.Id == id).Label);
            var features = new HashSet<string>(StringComparer.Ordinal);
            foreach (Match t in HtmlTag().Matches(text))
            {
                var name = t.Groups["name"].Value.ToLowerInvariant();
                features.Add("<" + t.Groups["close"].Value + name + ">");
                foreach (Match a in HtmlAttribute().Matches(t.Groups["attributes"].Value))
                {
                    var attribute = a.Groups["name"].Value.ToLowerInvariant();
                    if (attribute == "class")
                    {
                        foreach (var c in a.Groups["value"].Value.Split(' ', StringSplitOptions.RemoveEmptyEntries))
                        {
                            features.Add($"{name}.{c}");
                        }
                    }
                    else
                    {
                        features.Add($"{name}@{attribute}=\"{Blank(WebUtility.HtmlDecode(a.Groups["value"].Value), WebUtility.HtmlDecode(label))}\"");
                    }
                }
            }
            foreach (var piece in HtmlTag().Replace(text, "\u0001").Split('\u0001'))
            {
                var words = Blank(WebUtility.HtmlDecode(piece), WebUtility.HtmlDecode(label));
                if (words.Length > 0)
                {
                    features.Add("text:" + words);
                }
            }
            result[id] = features;
        }
        return result;
    }

    /// <summary>A text with the question's own label and every number blanked, and spaces collapsed.</summary>
    private static string Blank(string text, string label) =>
        Whitespace().Replace(Digits().Replace(text.Replace(label, "LABEL", StringComparison.Ordinal), "#"), " ").Trim();

    [GeneratedRegex(@"(?<![\w.])(?<whole>\d{1,3}(?:[,\u00A0\u202F' ]\d{3})+|\d+)(?:[.,](?<fraction>\d+))?(?!\w)")]
    private static partial Regex NumberToken();

    [GeneratedRegex("(?:href|src|action)=\"([^\"]*)\"")]
    private static partial Regex LinkAttribute();

    [GeneratedRegex(@"(?i)membership\w*\W{1,5}(\d+)")]
    private static partial Regex MembershipMention();

    [GeneratedRegex(@"\{\*?([A-Za-z_][A-Za-z0-9_]*)[^}]*\}")]
    private static partial Regex RouteParameter();

    [GeneratedRegex(@"(?i)calibrat\w*|seed\w*")]
    private static partial Regex MachineryWord();

    [GeneratedRegex(@"<div\b[^>]*\bclass=""[^""]*(?<![\w-])card(?![\w-])[^""]*""[^>]*>")]
    private static partial Regex CardStart();

    [GeneratedRegex(@"<div\b[^>]*>|</div\s*>")]
    private static partial Regex DivTag();

    [GeneratedRegex(@"name=""Answers\[\d+\]\.QuestionId""\s+value=""(\d+)""")]
    private static partial Regex QuestionIdInput();

    [GeneratedRegex(@"<(?<close>/?)(?<name>[A-Za-z][\w:-]*)(?<attributes>[^>]*)>")]
    private static partial Regex HtmlTag();

    [GeneratedRegex(@"(?<name>[\w:-]+)(?:\s*=\s*""(?<value>[^""]*)"")?")]
    private static partial Regex HtmlAttribute();

    [GeneratedRegex(@"\d+(?:[.,\u00A0\u202F']\d+)*")]
    private static partial Regex Digits();

    [GeneratedRegex(@"\s+")]
    private static partial Regex Whitespace();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteAnonymityProbeTests(SqliteFixture fixture) : AnonymityProbeTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresAnonymityProbeTests(PostgresFixture fixture) : AnonymityProbeTests(fixture);
