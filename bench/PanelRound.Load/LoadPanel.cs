using System.Globalization;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json.Nodes;

namespace PanelRound.Load;

/// <summary>
/// A panel for load: one indicator, <c>questions</c> Point questions over five target years, <c>experts</c>
/// roster experts with their personal links, and round 1 open for a week. Set up through the public API
/// with a Facilitator API key made by the app's own <c>create-api-key</c> command.
/// </summary>
internal sealed record LoadPanel(int PanelId, int[] Questions, string[] Periods, string[] Tokens)
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    public int ValuesPerSubmission => Questions.Length * Periods.Length;

    /// <summary>A Facilitator API key made by the app's own command (for an app this driver started).</summary>
    public static async Task<string> ApiKeyAsync(AppProcess app) =>
        (await app.RunCommandAsync("create-api-key", "--name", "load-driver", "--role", "Facilitator")).Trim().Split('\n')[^1].Trim();

    public static async Task<LoadPanel> CreateAsync(AppProcess app, int experts, int questions) =>
        await CreateAsync(app.BaseAddress, await ApiKeyAsync(app), experts, questions);

    public static async Task<LoadPanel> CreateAsync(Uri baseAddress, string apiKey, int experts, int questions)
    {
        using var staff = new HttpClient { BaseAddress = baseAddress, Timeout = TimeSpan.FromMinutes(2) };
        staff.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", apiKey);
        var indicator = (int)(await PostAsync(staff, "api/indicators", new { key = "load-price-" + Guid.NewGuid().ToString("N")[..8], name = "Load test price", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        await PostAsync(staff, $"api/indicators/{indicator}/observations",
            Enumerable.Range(2016, 10).Select(y => new { period = y.ToString(Inv), value = 4000 + (50 * (y - 2016)), source = "load driver" }).ToArray());
        var panel = (int)(await PostAsync(staff, "api/panels", new { title = "Load panel", brief = "Load.", startsOn = "2026-01-05", targetPeriods = "2026-2030" }))["id"]!;
        var qs = new int[questions];
        for (var i = 0; i < questions; i++)
        {
            qs[i] = (int)(await PostAsync(staff, $"api/panels/{panel}/questions", new { indicatorId = indicator, label = $"Price {i + 1}", format = "Point" }))["id"]!;
        }
        var tokens = new string[experts];
        for (var i = 0; i < experts; i++)
        {
            var e = (int)(await PostAsync(staff, "api/experts", new { name = $"Load expert {i}", email = $"load{i}.{indicator}@load.example" }))["id"]!;
            tokens[i] = (string)(await PostAsync(staff, $"api/panels/{panel}/members", new { expertId = e, sendInvitation = false }))["token"]!;
        }
        await PostAsync(staff, $"api/panels/{panel}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        return new LoadPanel(panel, qs, ["2026", "2027", "2028", "2029", "2030"], tokens);
    }

    /// <summary>One full submission; <paramref name="marker"/> is the first question's rationale, so it can be found in the database.</summary>
    public object Submission(string marker, double value) => new
    {
        draft = false,
        answers = Questions.Select((q, i) => new
        {
            questionId = q, rationale = i == 0 ? marker : null,
            periods = Periods.Select(p => new { period = p, value }).ToArray(),
        }).ToArray(),
    };

    private static async Task<JsonNode> PostAsync(HttpClient client, string url, object body)
    {
        using var r = await client.PostAsJsonAsync(new Uri(url, UriKind.Relative), body);
        var text = await r.Content.ReadAsStringAsync();
        return r.IsSuccessStatusCode ? JsonNode.Parse(text)! : throw new InvalidOperationException($"POST {url} answered {(int)r.StatusCode}: {text}");
    }
}
