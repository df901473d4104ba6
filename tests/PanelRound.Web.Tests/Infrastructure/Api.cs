using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using System.Text.Json.Nodes;
using System.Text.Json.Serialization;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>Small helpers for calling the JSON API in tests.</summary>
public static class Api
{
    /// <summary>The API's JSON conventions: camelCase names, enums as their names.</summary>
    public static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web) { Converters = { new JsonStringEnumConverter() } };

    /// <summary>
    /// POST of CSV files as one multipart form (field <c>name</c>, file <c>name.csv</c>, text/csv), as the
    /// import endpoints take them; the answer as status, JSON body (null when empty) and text.
    /// </summary>
    public static async Task<(HttpStatusCode Status, JsonNode? Body, string Text)> PostCsvFiles(this HttpClient client, string url, params (string Name, string Content)[] files)
    {
        using var form = new MultipartFormDataContent();
        foreach (var (name, content) in files)
        {
            var part = new ByteArrayContent(System.Text.Encoding.UTF8.GetBytes(content));
            part.Headers.ContentType = new System.Net.Http.Headers.MediaTypeHeaderValue("text/csv");
            form.Add(part, name, name + ".csv");
        }
        using var r = await client.PostAsync(url, form);
        var text = await r.Content.ReadAsStringAsync();
        return (r.StatusCode, text.Length == 0 ? null : JsonNode.Parse(text), text);
    }

    /// <summary>GET that must answer 200, read as the API's own response type.</summary>
    public static async Task<T> GetAs<T>(this HttpClient client, string url) => Read<T>(await client.GetTextOk(url), url);

    /// <summary>POST that must answer the expected status, read as the API's own response type.</summary>
    public static async Task<T> PostAs<T>(this HttpClient client, string url, object body, HttpStatusCode expected = HttpStatusCode.Created)
    {
        var r = await client.PostAsJsonAsync(url, body, Json);
        var text = await r.Content.ReadAsStringAsync();
        Assert.True(r.StatusCode == expected, $"POST {url}: {(int)r.StatusCode} {text}");
        return Read<T>(text, url);
    }

    /// <summary>GET that must answer 200; the body as text (for assertions about what a response does not contain).</summary>
    public static async Task<string> GetTextOk(this HttpClient client, string url)
    {
        var r = await client.GetAsync(url);
        var text = await r.Content.ReadAsStringAsync();
        Assert.True(r.StatusCode == HttpStatusCode.OK, $"GET {url}: {(int)r.StatusCode} {text}");
        return text;
    }

    /// <summary>A response body as the API's type; a body that does not fit fails the test with the body shown.</summary>
    public static T Read<T>(string json, string url = "")
    {
        try
        {
            return JsonSerializer.Deserialize<T>(json, Json) ?? throw new JsonException("null");
        }
        catch (JsonException e)
        {
            Assert.Fail($"{url}: not a {typeof(T).Name}: {e.Message}\n{json}");
            throw;
        }
    }

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
