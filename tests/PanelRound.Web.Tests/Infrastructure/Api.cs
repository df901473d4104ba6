using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>Small helpers for calling the JSON API in tests.</summary>
public static class Api
{
    public static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web);

    public static async Task<JsonNode> PostOk(this HttpClient client, string url, object body, HttpStatusCode expected = HttpStatusCode.Created)
    {
        var r = await client.PostAsJsonAsync(url, body, Json);
        var text = await r.Content.ReadAsStringAsync();
        Assert.True(r.StatusCode == expected, $"POST {url}: {(int)r.StatusCode} {text}");
        return JsonNode.Parse(text)!;
    }

    public static async Task<JsonNode> GetOk(this HttpClient client, string url)
    {
        var r = await client.GetAsync(url);
        var text = await r.Content.ReadAsStringAsync();
        Assert.True(r.StatusCode == HttpStatusCode.OK, $"GET {url}: {(int)r.StatusCode} {text}");
        return JsonNode.Parse(text)!;
    }

    public static async Task<(HttpStatusCode Status, JsonNode? Body)> Post(this HttpClient client, string url, object body)
    {
        var r = await client.PostAsJsonAsync(url, body, Json);
        var text = await r.Content.ReadAsStringAsync();
        return (r.StatusCode, text.Length == 0 ? null : JsonNode.Parse(text));
    }

    public static HttpClient WithExpertToken(this HttpClient client, string token)
    {
        client.DefaultRequestHeaders.Remove("X-Expert-Token");
        client.DefaultRequestHeaders.Add("X-Expert-Token", token);
        return client;
    }
}
