using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>Every bad request is a 400 ProblemDetails naming the field, in every environment; never a 500.</summary>
public abstract class BadRequestTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private Task<TestApp> StartInAsync(string environment) =>
        StartAsync(new Dictionary<string, string?> { [TestApp.EnvironmentSetting] = environment });

    [SkippableTheory]
    [InlineData("Development")]
    [InlineData("Production")]
    public async Task JsonOfTheWrongType_Answers400NamingTheField(string environment)
    {
        var app = await StartInAsync(environment);
        var p = await SmallPanel.CreateAsync(app, 3);
        await AssertNamesFieldAsync(await Send(p.Staff, "/api/experts", """{"name":5,"email":"a@b.example"}"""), "name");

        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        foreach (var bad in new[] { "\"abc\"", "\"1,5\"", "{}", "[1]" })
        {
            var body = $$"""{"draft":false,"answers":[{"questionId":{{p.PointQuestion}},"periods":[{"period":"2027","value":{{bad}}}]}]}""";
            await AssertNamesFieldAsync(await Send(expert, $"/api/expert/panels/{p.PanelId}/estimates", body), "answers[0].periods[0].value");
        }
        await AssertNamesFieldAsync(await Send(expert, $"/api/expert/panels/{p.PanelId}/estimates", "{\"draft\":false,\"answers\":"), "answers");
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableTheory]
    [InlineData("Development")]
    [InlineData("Production")]
    public async Task NullObservation_Answers400NamingTheElement(string environment)
    {
        var app = await StartInAsync(environment);
        var staff = await app.StaffClientAsync();
        var id = (int)(await staff.PostOk("/api/indicators", new { key = "nulls", name = "Nulls", unitLabel = "EUR", decimals = 0 }))["id"]!;
        await AssertNamesFieldAsync(await Send(staff, $"/api/indicators/{id}/observations", "[null]"), "observations[0]");
        Assert.Equal(0, await app.WithDbAsync(db => db.Observations.CountAsync()));
    }

    [SkippableTheory]
    [InlineData("Development")]
    [InlineData("Production")]
    public async Task BrokenMultipart_Answers400(string environment)
    {
        var app = await StartInAsync(environment);
        var facilitator = await app.StaffClientAsync();
        var id = (int)(await facilitator.PostOk("/api/indicators", new { key = "multi", name = "Multi", unitLabel = "EUR", decimals = 0 }))["id"]!;
        foreach (var url in new[] { "/api/outcomes/csv", "/api/imports/past-panels", $"/api/indicators/{id}/observations/csv" })
        {
            var content = new ByteArrayContent(Encoding.UTF8.GetBytes("--xyz\r\nContent-Disposition: form-data; name=\"file\"; filename=\"a.csv\"\r\n\r\nperiod,value\r\n2019,1"));
            content.Headers.ContentType = MediaTypeHeaderValue.Parse("multipart/form-data; boundary=xyz");
            var response = await facilitator.PostAsync(url, content);
            Assert.True(response.StatusCode == HttpStatusCode.BadRequest, $"{url}: {(int)response.StatusCode} {await response.Content.ReadAsStringAsync()}");
            Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        }
    }

    [SkippableFact]
    public async Task ControlCharacters_InTextFields_Answer400NamingTheField()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var (status, problem) = await p.Staff.Post("/api/experts", new { name = "Null\u0000Byte", email = "nul@panel.example" });
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.NotNull(problem!["errors"]!["name"]);

        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        var submission = new
        {
            draft = false,
            answers = new object[]
            {
                new { questionId = p.PointQuestion, rationale = "Supply \u0000 view", periods = p.Periods.Select(x => new { period = x, value = 10 }).ToArray() },
                new { questionId = p.RangeQuestion, periods = p.Periods.Select(x => new { period = x, p10 = 9, p50 = 10, p90 = 11 }).ToArray() },
            },
        };
        (status, problem) = await expert.Post($"/api/expert/panels/{p.PanelId}/estimates", submission);
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.NotNull(problem!["errors"]!["answers[0].rationale"]);
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task TinyOrHugeJsonNumbers_Answer400NamingTheField_NeverStoredAsAnotherNumber()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        foreach (var bad in new[] { "1e-400", "1e309", "-1e13" })
        {
            var body = $$"""{"draft":true,"answers":[{"questionId":{{p.PointQuestion}},"periods":[{"period":"2027","value":{{bad}}}]}]}""";
            await AssertNamesFieldAsync(await Send(expert, $"/api/expert/panels/{p.PanelId}/estimates", body), "answers[0].periods[0].value");
        }
        Assert.Equal(0, await app.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task UnknownPagePostHandler_Answers404_Not500()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        // A GET with an unknown handler name falls back to the page's GET handler; a POST finds none.
        var expert = await StaffPages.ExpertClientAsync(app, p.Members[0].Token);
        Assert.Equal(HttpStatusCode.OK, (await expert.GetAsync("/expert?handler=nonsense")).StatusCode);
        var staff = await StaffPages.SignedInClientAsync(app, PanelRound.Data.Entities.Roles.Facilitator);
        var token = await StaffCookieClient.TokenFromAsync(staff, $"/Staff/Panels/Details/{p.PanelId}");
        var response = await staff.PostFormAsync($"/Staff/Panels/Details/{p.PanelId}?handler=nonsense", token, []);
        Assert.Equal(HttpStatusCode.NotFound, response.StatusCode);
    }

    private static async Task<HttpResponseMessage> Send(HttpClient client, string url, string json) =>
        await client.PostAsync(url, new StringContent(json, Encoding.UTF8, "application/json"));

    private static async Task AssertNamesFieldAsync(HttpResponseMessage response, string field)
    {
        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.BadRequest, $"{(int)response.StatusCode} {text}");
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        var errors = JsonNode.Parse(text)!["errors"]!.AsObject();
        Assert.True(errors.ContainsKey(field), $"expected an error for '{field}': {text}");
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteBadRequestTests(SqliteFixture fixture) : BadRequestTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresBadRequestTests(PostgresFixture fixture) : BadRequestTests(fixture);
