using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>Regression tests for the 500s the fuzzing found: each bad input answers a 4xx ProblemDetails naming what is wrong, and stores nothing.</summary>
public abstract class MalformedInputTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task JsonBody_UnknownCharset_Is415ProblemDetails()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var content = new StringContent("""{"key":"vacancy","name":"Vacancy","unitLabel":"%","decimals":1}""", Encoding.UTF8);
        content.Headers.Remove("Content-Type");
        content.Headers.TryAddWithoutValidation("Content-Type", "application/json; charset=latin-7");

        var response = await staff.PostAsync("/api/indicators", content);

        Assert.Equal(HttpStatusCode.UnsupportedMediaType, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        Assert.NotNull(JsonNode.Parse(await response.Content.ReadAsStringAsync())!["errors"]!["Content-Type"]);
        Assert.Equal(0, await app.WithDbAsync(db => db.Indicators.CountAsync()));
    }

    [SkippableFact]
    public async Task IndicatorKey_WithNulCharacter_Is400NamingTheField_NothingStored()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();

        var response = await staff.PostAsync("/api/indicators",
            new StringContent("""{"key":"vac\u0000ancy","name":"Vacancy","unitLabel":"%","decimals":1}""", Encoding.UTF8, "application/json"));

        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.BadRequest, $"{(int)response.StatusCode} {text}");
        Assert.NotNull(JsonNode.Parse(text)!["errors"]!["key"]);
        Assert.Equal(0, await app.WithDbAsync(db => db.Indicators.CountAsync()));
    }

    [SkippableFact]
    public async Task PastPanelCsv_WithNulCharacter_Is400NamingTheRow_NothingStored()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        await staff.PostOk("/api/indicators", new { key = "vacancy", name = "Vacancy", unitLabel = "%", decimals = 1 });
        var file = new ByteArrayContent(Encoding.UTF8.GetBytes(
            "panel,panel_start,panel_closed,indicator,unit,target_period,expert,round,value\npast\u0000-1,2019-01-07,2019-02-01,vacancy,%,2021,EXP\u0000-9,1,4.5\n"));
        file.Headers.ContentType = new MediaTypeHeaderValue("text/csv");
        var before = await app.WithDbAsync(db => db.AuditEvents.CountAsync());

        var response = await staff.PostAsync("/api/imports/past-panels", new MultipartFormDataContent { { file, "forecasts", "forecasts.csv" } });

        var text = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.BadRequest, $"{(int)response.StatusCode} {text}");
        Assert.Contains("Row 1", text, StringComparison.Ordinal);
        Assert.Equal(0, await app.WithDbAsync(db => db.Panels.CountAsync()));
        Assert.Equal(before, await app.WithDbAsync(db => db.AuditEvents.CountAsync()));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteMalformedInputTests(SqliteFixture fixture) : MalformedInputTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresMalformedInputTests(PostgresFixture fixture) : MalformedInputTests(fixture);
