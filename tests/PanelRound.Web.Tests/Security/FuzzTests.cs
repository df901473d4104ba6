using System.Globalization;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Http.Metadata;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// Seeded, reproducible fuzzing of every API endpoint that writes (found in the endpoint data
/// source: the expert submission, every staff create and update, every CSV import): malformed
/// bodies of every kind. No answer is a 500; every 4xx is a ProblemDetails with its title and
/// status; a refused request changes the row count of no table.
/// </summary>
public abstract partial class FuzzTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>The seed; set PANELROUND_FUZZ_SEED to replay another run.</summary>
    private static int Seed => int.TryParse(Environment.GetEnvironmentVariable("PANELROUND_FUZZ_SEED"), out var s) ? s : 20_261_102;

    private const int Requests = 1_200;

    /// <summary>A write endpoint found in the data source.</summary>
    private sealed record Target(string Method, string Route, bool TakesForm)
    {
        public string Key => $"{Method} {Route}";
    }

    /// <summary>What a fuzz request needs: the ids that exist, the expert's token, the indicator's key.</summary>
    private sealed record World(int DraftPanel, int DraftQuestion, int DraftMember, int RunningPanel, int[] Questions, int Indicator, string IndicatorKey, int Expert, int OtherPanel, string Token);

    [SkippableFact]
    public async Task EveryWriteEndpoint_1200MalformedRequests_No500_ProblemDetails_NothingChanged()
    {
        var app = await StartAsync();
        var world = await SetUpAsync(app);
        var staff = await app.StaffClientAsync(Roles.Administrator);
        var expert = app.Client().WithExpertToken(world.Token);
        var targets = Discover(app.Services);
        Assert.Contains(targets, t => t.Route.StartsWith("/api/expert/", StringComparison.Ordinal));
        Assert.Contains(targets, t => t.TakesForm);

        var tables = await SecurityKit.TablesAsync(app);
        var rng = new Random(Seed);
        var byStatus = new SortedDictionary<int, int>();
        var byKind = new SortedDictionary<string, int>(StringComparer.Ordinal);
        var failures = new List<string>();
        var started = DateTime.UtcNow;
        for (var i = 0; i < Requests; i++)
        {
            var target = targets[rng.Next(targets.Count)];
            var (kind, url, content) = target.TakesForm ? FormCase(rng, target, world) : JsonCase(rng, target, world);
            byKind[kind] = byKind.GetValueOrDefault(kind) + 1;
            var before = await SecurityKit.RowCountsAsync(app, tables);
            using var request = new HttpRequestMessage(new HttpMethod(target.Method), url) { Content = content };
            using var response = await (target.Route.StartsWith("/api/expert/", StringComparison.Ordinal) ? expert : staff).SendAsync(request);
            var status = (int)response.StatusCode;
            byStatus[status] = byStatus.GetValueOrDefault(status) + 1;
            var text = await response.Content.ReadAsStringAsync();
            var what = $"#{i} {kind}: {target.Method} {url} -> {status}";
            if (status >= 500)
            {
                failures.Add($"{what} {Shorten(text)}");
            }
            else if (status >= 400)
            {
                if (ProblemOf(response, text, status) is { } wrong)
                {
                    failures.Add($"{what}: {wrong} {Shorten(text)}");
                }
                var after = await SecurityKit.RowCountsAsync(app, tables);
                if (after != before)
                {
                    failures.Add($"{what}: refused, yet the data changed: {before} -> {after}");
                }
            }
        }
        var seconds = (DateTime.UtcNow - started).TotalSeconds;
        Console.WriteLine($"Fuzz ({Provider}, seed {Seed}): {Requests} requests to {targets.Count} endpoints in {seconds:0.0} s; by status: "
            + string.Join(", ", byStatus.Select(kv => $"{kv.Key}: {kv.Value}")) + "; by kind: " + string.Join(", ", byKind.Select(kv => $"{kv.Key} {kv.Value}")));
        Assert.True(failures.Count == 0, $"{failures.Count} of {Requests} requests went wrong (seed {Seed}):\n" + string.Join('\n', failures.Take(40)));
        // Most requests must be refused: a run where the malformed bodies got through would show nothing.
        Assert.True(byStatus.Where(kv => kv.Key >= 400).Sum(kv => kv.Value) > Requests * 0.8, "Fewer than 80% of the malformed requests were refused.");
    }

    /// <summary>Why a 4xx answer is not a ProblemDetails, or null when it is one.</summary>
    private static string? ProblemOf(HttpResponseMessage response, string text, int status)
    {
        if (response.Content.Headers.ContentType?.MediaType != "application/problem+json")
        {
            return $"content type {response.Content.Headers.ContentType?.MediaType ?? "none"}, not application/problem+json";
        }
        try
        {
            var node = JsonNode.Parse(text);
            return node?["title"] is null ? "no title" : node["status"]?.GetValue<int>() != status ? "status missing or different" : null;
        }
        catch (JsonException e)
        {
            return "not JSON: " + e.Message;
        }
    }

    // ---- JSON endpoints ----

    /// <summary>A valid body per endpoint, as the API documents it; an endpoint without one is fuzzed from an empty object.</summary>
    private static JsonNode Template(Target t, World w) => (t.Method, t.Route) switch
    {
        ("POST", "/api/indicators") => Obj(new { key = "fuzz-key", name = "Fuzz indicator", unitLabel = "%", decimals = 1, description = "d" }),
        ("POST", "/api/indicators/{id:int}/observations") => JsonSerializer.SerializeToNode(new[] { new { period = "2024", value = 4.5, source = "s", observedOn = "2025-02-15" } })!,
        ("POST", "/api/experts") => Obj(new { name = "Fuzz Expert", email = "fuzz@panel.example", affiliation = "A", expertise = "E", declaredInterests = "None" }),
        ("POST", "/api/panels") or ("PUT", "/api/panels/{id:int}") => Obj(new
        {
            title = "Fuzz panel", brief = "Brief.", startsOn = "2026-11-02", targetPeriods = "2027-2029",
            settings = new { outlierRule = "TukeyFences", trimFraction = 0.1, consensusThreshold = 0.1, stabilityThreshold = 0.15, roundCap = 4, minimumGroupSize = 3, showRationales = true, outliersMustJustify = false, weighting = "Equal" },
        }),
        ("POST", "/api/panels/{id:int}/questions") or ("PUT", "/api/panels/{id:int}/questions/{questionId:int}") =>
            Obj(new { indicatorId = w.Indicator, label = "Q", helpText = "h", format = "Point", hardMin = 0, hardMax = 100, plausibleMin = 1, plausibleMax = 50 }),
        ("POST", "/api/panels/{id:int}/members") => Obj(new { expertId = w.Expert, sendInvitation = false }),
        ("POST", "/api/panels/{id:int}/members/{membershipId:int}/reissue") => Obj(new { sendInvitation = false }),
        ("POST", "/api/panels/{id:int}/rounds") => Obj(new { closesAt = DateTime.UtcNow.AddDays(7) }),
        ("POST", "/api/outcomes") => Obj(new { indicator = w.IndicatorKey, period = "2024", value = 4.5, source = "s", observedOn = "2025-02-15" }),
        ("POST", "/api/expert/panels/{panelId:int}/estimates") => Obj(new
        {
            draft = false,
            answers = new object[]
            {
                new { questionId = w.Questions[0], confidence = 3, rationale = "r", periods = new[] { new { period = "2027", value = 4100.5 }, new { period = "2028", value = 4200.5 } } },
                new { questionId = w.Questions[1], periods = new[] { new { period = "2027", p10 = 1.0, p50 = 2.0, p90 = 3.0 }, new { period = "2028", p10 = 1.0, p50 = 2.0, p90 = 3.0 } } },
            },
        }),
        _ => new JsonObject(),
    };

    private static JsonNode Obj(object o) => JsonSerializer.SerializeToNode(o, Api.Json)!;

    /// <summary>Bad values for a field: wrong types, non-finite and huge numbers, huge and control-character strings.</summary>
    private static readonly string[] BadValues =
    [
        "\"abc\"", "true", "null", "[]", "{}", "\"NaN\"", "\"Infinity\"", "\"-Infinity\"", "1e309", "-1e309", "1e308", "-1.7976931348623157e308",
        "9007199254740993", "2147483648", "-2147483649", "-1", "0", "1.5", "\"\"", "\" \"", "\"\\u0000\\u0001\\u001b[31m\"", "\"\\ud800\"",
        "\"2027-13-45\"", "\"１２３\"", "\"1,5\"", "\"1 000\"", "\"<script>alert(1)</script>\"", "\"' OR 1=1 --\"", "\"../../etc/passwd\"", "12345678901234567890",
    ];

    private static (string Kind, string Url, HttpContent? Content) JsonCase(Random rng, Target t, World w)
    {
        var url = Url(rng, t, w, foreign: rng.Next(10) == 0);
        var kind = url.Foreign ? "foreign or negative id" : Pick(rng, ["bad value", "bad value", "bad value", "missing field", "extra field", "deep JSON", "wrong content type", "invalid UTF-8", "truncated JSON", "wrong top-level type", "oversized body", "raw NaN token", "control-character string", "huge string"]);
        var body = Template(t, w);
        string json;
        switch (kind)
        {
            case "bad value":
                json = Replace(rng, body, BadValues[rng.Next(BadValues.Length)]);
                break;
            case "raw NaN token":
                json = Replace(rng, body, Pick(rng, ["NaN", "Infinity", "-Infinity", "0x10", "+1", ".5", "1.", "01"]));
                break;
            case "control-character string":
                json = Replace(rng, body, JsonSerializer.Serialize(new string(Enumerable.Range(0, 200).Select(_ => (char)rng.Next(0, 32)).ToArray())));
                break;
            case "huge string":
                json = Replace(rng, body, JsonSerializer.Serialize(new string('x', rng.Next(5_000, 300_000))));
                break;
            case "missing field":
                json = Mutate(rng, body, (o, key) => o.Remove(key));
                break;
            case "extra field":
                json = Mutate(rng, body, (o, _) => o["unexpected" + rng.Next(100)] = "__fuzz_marker__").Replace("\"__fuzz_marker__\"", BadValues[rng.Next(BadValues.Length)], StringComparison.Ordinal);
                break;
            case "deep JSON":
                var depth = rng.Next(65, 5_000);
                json = Replace(rng, body, string.Concat(Enumerable.Repeat("{\"a\":", depth)) + "1" + new string('}', depth));
                break;
            case "truncated JSON":
                var whole = body.ToJsonString();
                json = whole[..rng.Next(0, Math.Max(1, whole.Length - 1))];
                break;
            case "wrong top-level type":
                json = Pick(rng, ["[]", "\"text\"", "42", "null", "true", "[{}]", "{}"]) is var top && body is JsonArray && top == "[]" ? "{}" : top;
                break;
            case "oversized body":
                json = Replace(rng, body, JsonSerializer.Serialize(new string('y', 3_000_000)));
                break;
            default:
                json = body.ToJsonString();
                break;
        }
        HttpContent content = kind switch
        {
            "wrong content type" => WithType(new StringContent(json, Encoding.UTF8), Pick(rng, ["text/plain", "application/xml", "application/x-www-form-urlencoded", "multipart/form-data; boundary=x", "application/json; charset=latin-7", "application/json; charset=utf-16"])),
            "invalid UTF-8" => Utf8Broken(rng, json),
            _ => new StringContent(json, Encoding.UTF8, "application/json"),
        };
        return (kind, url.Path, content);
    }

    private static HttpContent WithType(HttpContent content, string type)
    {
        content.Headers.Remove("Content-Type");
        content.Headers.TryAddWithoutValidation("Content-Type", type);
        return content;
    }

    /// <summary>The body with one leaf value (at any depth) replaced by raw JSON text.</summary>
    private static string Replace(Random rng, JsonNode body, string raw)
    {
        const string marker = "\"__fuzz_marker__\"";
        var leaves = Leaves(body).ToList();
        if (leaves.Count == 0)
        {
            return body is JsonArray ? $"[{raw}]" : $"{{\"value\":{raw}}}";
        }
        var (parent, key, index) = leaves[rng.Next(leaves.Count)];
        if (parent is JsonObject o)
        {
            o[key!] = "__fuzz_marker__";
        }
        else
        {
            ((JsonArray)parent)[index] = "__fuzz_marker__";
        }
        return body.ToJsonString().Replace(marker, raw, StringComparison.Ordinal);
    }

    private static string Mutate(Random rng, JsonNode body, Action<JsonObject, string> change)
    {
        var objects = Objects(body).Where(o => o.Count > 0).ToList();
        if (objects.Count > 0)
        {
            var o = objects[rng.Next(objects.Count)];
            change(o, o.Select(kv => kv.Key).ElementAt(rng.Next(o.Count)));
        }
        return body.ToJsonString();
    }

    private static IEnumerable<(JsonNode Parent, string? Key, int Index)> Leaves(JsonNode node)
    {
        if (node is JsonObject o)
        {
            foreach (var (k, v) in o.ToList())
            {
                if (v is JsonObject or JsonArray)
                {
                    foreach (var leaf in Leaves(v))
                    {
                        yield return leaf;
                    }
                }
                yield return (o, k, -1);
            }
        }
        else if (node is JsonArray a)
        {
            for (var i = 0; i < a.Count; i++)
            {
                if (a[i] is JsonObject or JsonArray)
                {
                    foreach (var leaf in Leaves(a[i]!))
                    {
                        yield return leaf;
                    }
                }
                yield return (a, null, i);
            }
        }
    }

    private static IEnumerable<JsonObject> Objects(JsonNode? node) => node switch
    {
        JsonObject o => o.Select(kv => kv.Value).SelectMany(Objects).Prepend(o),
        JsonArray a => a.SelectMany(Objects),
        _ => [],
    };

    /// <summary>The text as UTF-8 with invalid byte sequences put into a string value (or anywhere, if it has none).</summary>
    private static ByteArrayContent Utf8Broken(Random rng, string json)
    {
        var bytes = Encoding.UTF8.GetBytes(json).ToList();
        var quote = bytes.IndexOf((byte)'"');
        var at = quote >= 0 ? quote + 1 : rng.Next(bytes.Count + 1);
        bytes.InsertRange(at, Pick(rng, new byte[][] { [0xC3, 0x28], [0xFF, 0xFE], [0xED, 0xA0, 0x80], [0xF8, 0x88, 0x80, 0x80, 0x80], [0xC0, 0xAF], [0x80] }));
        var content = new ByteArrayContent([.. bytes]);
        content.Headers.ContentType = new MediaTypeHeaderValue("application/json") { CharSet = "utf-8" };
        return content;
    }

    // ---- CSV imports (multipart) ----

    private static (string Kind, string Url, HttpContent? Content) FormCase(Random rng, Target t, World w)
    {
        var url = Url(rng, t, w, foreign: rng.Next(10) == 0);
        var kind = url.Foreign ? "foreign or negative id" : Pick(rng, ["bad CSV value", "bad CSV value", "broken CSV quoting", "missing column", "invalid UTF-8 CSV", "huge CSV field", "broken multipart", "wrong form field", "not multipart", "empty file", "control characters in CSV"]);
        var imports = t.Route.Contains("past-panels", StringComparison.Ordinal);
        var outcomes = t.Route.StartsWith("/api/outcomes", StringComparison.Ordinal);
        var (header, row) = imports
            ? ("panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value", $"past-1,2019-01-07,2019-02-01,{w.IndicatorKey},EUR/m²,2021,EXP-9,1,4100.5")
            : outcomes ? ("indicator,period,value,source,observed_on", $"{w.IndicatorKey},2024,4.5,survey,2025-02-15") : ("period,value,source,observed_on", "2024,4.5,survey,2025-02-15");
        var cells = row.Split(',');
        string csv;
        switch (kind)
        {
            case "bad CSV value":
                cells[rng.Next(cells.Length)] = Pick(rng, ["NaN", "Infinity", "-Infinity", "1e309", "-1e309", "1e308", "abc", "", "1,5", "\"1,5\"", "2027-13-45", "１２３", "=HYPERLINK(\"x\")", "-1", "99999999999999999999", "0x10"]);
                csv = $"{header}\n{string.Join(',', cells)}\n";
                break;
            case "broken CSV quoting":
                csv = $"{header}\n" + Pick(rng, [$"\"{row}\n", $"{cells[0]},\"unterminated,{string.Join(',', cells[2..])}\n", $"{cells[0]},ab\"cd,{string.Join(',', cells[2..])}\n", $"\"a\"\"b\"x,{string.Join(',', cells[1..])}\n"]);
                break;
            case "missing column":
                csv = $"{string.Join(',', header.Split(',')[1..])}\n{string.Join(',', cells[1..])}\n";
                break;
            case "invalid UTF-8 CSV":
                csv = $"{header}\n{row}\n";
                var bytes = Encoding.UTF8.GetBytes(csv).ToList();
                bytes.InsertRange(rng.Next(header.Length + 1, bytes.Count), new byte[] { 0xC3, 0x28, 0xFF });
                return (kind, url.Path, Multipart(imports, [.. bytes]));
            case "huge CSV field":
                cells[rng.Next(cells.Length)] = new string('z', rng.Next(10_000, 2_000_000));
                csv = $"{header}\n{string.Join(',', cells)}\n";
                break;
            case "control characters in CSV":
                cells[rng.Next(cells.Length)] = "a\u0000b\u001bc\u0007";
                csv = $"{header}\n{string.Join(',', cells)}\n";
                break;
            case "empty file":
                csv = rng.Next(2) == 0 ? "" : header + "\n";
                break;
            case "broken multipart":
                var broken = new ByteArrayContent(Encoding.UTF8.GetBytes(Pick(rng, [
                    $"--b\r\nContent-Disposition: form-data; name=\"file\"; filename=\"a.csv\"\r\n\r\n{header}\n{row}",
                    "--b\r\nContent-Disposition: form-data; name=\"file\"\r\n",
                    "no boundary here at all",
                    $"--other\r\nContent-Disposition: form-data; name=\"file\"; filename=\"a.csv\"\r\n\r\n{header}\r\n--other--\r\n",
                ])));
                broken.Headers.TryAddWithoutValidation("Content-Type", Pick(rng, ["multipart/form-data; boundary=b", "multipart/form-data", "multipart/form-data; boundary=\"\""]));
                return (kind, url.Path, broken);
            case "wrong form field":
                var wrong = new MultipartFormDataContent { { new ByteArrayContent(Encoding.UTF8.GetBytes($"{header}\n{row}\n")), "upload", "a.csv" } };
                return (kind, url.Path, wrong);
            case "not multipart":
                return (kind, url.Path, new StringContent($"{header}\n{row}\n", Encoding.UTF8, Pick(rng, ["text/csv", "application/json", "text/plain"])));
            default:
                csv = $"{header}\n{row}\n";
                break;
        }
        return (kind, url.Path, Multipart(imports, Encoding.UTF8.GetBytes(csv)));
    }

    private static MultipartFormDataContent Multipart(bool imports, byte[] csv) =>
        imports ? new MultipartFormDataContent { { new ByteArrayContent(csv), "forecasts", "forecasts.csv" } } : new MultipartFormDataContent { { new ByteArrayContent(csv), "file", "data.csv" } };

    // ---- targets, ids, set-up ----

    /// <summary>The route with its ids filled: the entities that exist, or (foreign) negative, zero, unknown or another panel's ids.</summary>
    private static (string Path, bool Foreign) Url(Random rng, Target t, World w, bool foreign)
    {
        var path = RouteParameter().Replace(t.Route, m => (foreign ? Pick(rng, [-1, 0, 999_999, int.MaxValue, w.OtherPanel]) : m.Groups[1].Value switch
        {
            "panelId" => w.RunningPanel,
            "id" when t.Route.StartsWith("/api/indicators", StringComparison.Ordinal) => w.Indicator,
            "id" => w.DraftPanel,
            "questionId" => w.DraftQuestion,
            "membershipId" => w.DraftMember,
            _ => 1,
        }).ToString(CultureInfo.InvariantCulture));
        return (path, foreign && path != t.Route);
    }

    private static T Pick<T>(Random rng, IReadOnlyList<T> items) => items[rng.Next(items.Count)];

    /// <summary>Every API endpoint that writes, from the endpoint data source.</summary>
    private static List<Target> Discover(IServiceProvider services) =>
        services.GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
            .Where(e => e.Metadata.GetMetadata<PageActionDescriptor>() is null && (e.RoutePattern.RawText ?? "").StartsWith("/api", StringComparison.Ordinal))
            .SelectMany(e => (e.Metadata.GetMetadata<HttpMethodMetadata>()?.HttpMethods ?? []).Where(m => m is "POST" or "PUT" or "DELETE")
                .Select(m => new Target(m, "/" + (e.RoutePattern.RawText ?? "").Trim('/'),
                    e.Metadata.GetMetadata<IAcceptsMetadata>()?.ContentTypes.Contains("multipart/form-data") == true
                    || (e.RoutePattern.RawText ?? "").EndsWith("/csv", StringComparison.Ordinal) || (e.RoutePattern.RawText ?? "").Contains("/imports/", StringComparison.Ordinal))))
            .Distinct().OrderBy(t => t.Key, StringComparer.Ordinal).ToList();

    /// <summary>A running panel with an expert, a draft panel with a question and a member, an indicator, an expert not yet on the draft.</summary>
    private static async Task<World> SetUpAsync(TestApp app)
    {
        var running = await SmallPanel.CreateAsync(app, 3);
        var other = await SmallPanel.CreateAsync(app, 3);
        var seed = await PageAuthorizationTests.SeedAsync(app);
        return new World(seed.PanelId, seed.QuestionId, seed.MembershipId, running.PanelId, [running.PointQuestion, running.RangeQuestion],
            seed.IndicatorId, seed.IndicatorKey, seed.NewExpertId, other.PanelId, running.Members[0].Token);
    }

    private static string Shorten(string text) => text.Length <= 200 ? text : text[..200] + "...";

    [GeneratedRegex(@"\{\*?([A-Za-z_][A-Za-z0-9_]*)[^}]*\}")]
    private static partial Regex RouteParameter();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteFuzzTests(SqliteFixture fixture) : FuzzTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresFuzzTests(PostgresFixture fixture) : FuzzTests(fixture);
