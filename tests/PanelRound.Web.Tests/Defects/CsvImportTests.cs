using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// The three CSV imports (an indicator's observations, outcomes, past panels) refuse a file that
/// is not strict RFC 4180 (section 2) UTF-8, or whose numbers do not fit, with a 400 naming the
/// row, and save nothing: all or nothing, never a silently swallowed or altered row.
/// </summary>
public abstract class CsvImportTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>Stands for one raw byte 0xED (í in Latin-1), which is not UTF-8 on its own (RFC 3629 section 3).</summary>
    private const char Latin1Marker = '\u0001';

    public static TheoryData<string> Cases => new() { "unbalanced quote", "latin-1 byte", "underflow", "extra field" };

    /// <summary>
    /// The second data row of a file, broken as the case says; <paramref name="prefix"/> holds its
    /// fields before the number, <paramref name="text"/> is the free text after it (the last column).
    /// </summary>
    private static string BrokenRow(string @case, string prefix, string number, string text) => @case switch
    {
        // RFC 4180 section 2, rule 5-7: a field that starts with a quote runs to the matching quote.
        "unbalanced quote" => $"{prefix}{number},\"{text}",
        "latin-1 byte" => $"{prefix}{number},{text} Bolet{Latin1Marker}n",
        // 1e-400 is below the smallest subnormal double (about 4.9e-324, IEEE 754-2008): it would be stored as 0.
        "underflow" => $"{prefix}1e-400,{text}",
        // RFC 4180 section 2, rule 4: each line should contain the same number of fields.
        "extra field" => $"{prefix}{number},{text},revised",
        _ => throw new ArgumentOutOfRangeException(nameof(@case)),
    };

    private static byte[] Bytes(string text) =>
        Encoding.UTF8.GetBytes(text).Select(b => b == (byte)Latin1Marker ? (byte)0xED : b).ToArray();

    private static async Task<(HttpStatusCode Status, JsonNode? Body, string Text, string? MediaType)> PostFiles(HttpClient client, string url, params (string Name, byte[] Content)[] files)
    {
        using var form = new MultipartFormDataContent();
        foreach (var (name, content) in files)
        {
            var part = new ByteArrayContent(content);
            part.Headers.ContentType = new MediaTypeHeaderValue("text/csv");
            form.Add(part, name, name + ".csv");
        }
        var r = await client.PostAsync(url, form);
        var text = await r.Content.ReadAsStringAsync();
        return (r.StatusCode, text.Length == 0 ? null : JsonNode.Parse(text), text, r.Content.Headers.ContentType?.MediaType);
    }

    private static void AssertRefused(string @case, (HttpStatusCode Status, JsonNode? Body, string Text, string? MediaType) response, string key)
    {
        Assert.True(response.Status == HttpStatusCode.BadRequest, $"{@case}: {(int)response.Status} {response.Text}");
        Assert.Equal("application/problem+json", response.MediaType);
        var errors = response.Body!["errors"]!.AsObject();
        Assert.True(errors.ContainsKey(key), $"{@case}: no error keyed '{key}' in {response.Text}");
        Assert.Contains(errors[key]!.AsArray(), m => ((string)m!).StartsWith("Row 2", StringComparison.Ordinal));
    }

    private sealed record Counts(int Indicators, int Observations, int Panels, int Experts, int Audit);

    private static Task<Counts> CountAsync(TestApp app) =>
        app.WithDbAsync(async db => new Counts(
            await db.Indicators.CountAsync(), await db.Observations.CountAsync(), await db.Panels.CountAsync(), await db.Experts.CountAsync(), await db.AuditEvents.CountAsync()));

    private async Task<(TestApp App, HttpClient Staff, int IndicatorId)> StartWithIndicatorAsync()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var id = (int)(await staff.PostOk("/api/indicators", new { key = "idx-a", name = "Land price index, Calderport", unitLabel = "points", decimals = 0 }))["id"]!;
        await staff.PostOk($"/api/indicators/{id}/observations", new[] { new { period = "2015", value = 2900.0, source = "Calderport land registry" } }, HttpStatusCode.OK);
        return (app, staff, id);
    }

    [SkippableTheory]
    [MemberData(nameof(Cases))]
    public async Task IndicatorObservationsCsv_MalformedRow_Is400NamingTheRow_AndAddsNothing(string @case)
    {
        var (app, staff, id) = await StartWithIndicatorAsync();
        var before = await CountAsync(app);
        var csv = "period,value,source\n2016,3000,Calderport land registry\n"
            + BrokenRow(@case, "2017,", "3100", "Calderport land registry") + "\n2018,3200,Calderport land registry\n2019,3300,Calderport land registry\n";

        var response = await PostFiles(staff, $"/api/indicators/{id}/observations/csv", ("file", Bytes(csv)));

        AssertRefused(@case, response, "row 2");
        Assert.Equal(before, await CountAsync(app));
    }

    [SkippableTheory]
    [MemberData(nameof(Cases))]
    public async Task OutcomesCsv_MalformedRow_Is400NamingTheRow_AndAddsNothing(string @case)
    {
        var (app, _, _) = await StartWithIndicatorAsync();
        var reviewer = await app.StaffClientAsync(PanelRound.Data.Entities.Roles.Reviewer);
        var before = await CountAsync(app);
        var csv = "indicator,period,value,source\nidx-a,2016,3000,Calderport land registry\n"
            + BrokenRow(@case, "idx-a,2017,", "3100", "Calderport land registry") + "\nidx-a,2018,3200,Calderport land registry\nidx-a,2019,3300,Calderport land registry\n";

        var response = await PostFiles(reviewer, "/api/outcomes/csv", ("file", Bytes(csv)));

        AssertRefused(@case, response, "row 2");
        Assert.Equal(before, await CountAsync(app));
    }

    public static TheoryData<string, string> PastPanelCases()
    {
        var data = new TheoryData<string, string>();
        foreach (var file in new[] { "forecasts", "observations" })
        {
            foreach (var @case in Cases)
            {
                data.Add(file, @case);
            }
        }
        return data;
    }

    [SkippableTheory]
    [MemberData(nameof(PastPanelCases))]
    public async Task PastPanelImport_MalformedRow_Is400NamingTheFileAndRow_AndImportsNothing(string file, string @case)
    {
        var (app, staff, _) = await StartWithIndicatorAsync();
        var before = await CountAsync(app);
        // Extra columns are ignored by the import (here: a free-text note), but they are still CSV fields.
        const string forecastPrefix = "p-1,2019-03-01,idx-a,points,2020,";
        var forecasts = "panel,panel_start,indicator,unit,target_period,expert,round,value,note\n"
            + $"{forecastPrefix}A,1,3400,first answer\n"
            + (file == "forecasts" ? BrokenRow(@case, forecastPrefix + "B,1,", "3450", "second answer") : $"{forecastPrefix}B,1,3450,second answer")
            + $"\n{forecastPrefix}C,1,3500,third answer\n{forecastPrefix}D,1,3550,fourth answer\n";
        var observations = "indicator,period,value,source\nidx-a,2016,3000,Calderport land registry\n"
            + (file == "observations" ? BrokenRow(@case, "idx-a,2017,", "3100", "Calderport land registry") : "idx-a,2017,3100,Calderport land registry")
            + "\nidx-a,2018,3200,Calderport land registry\nidx-a,2020,3380,Calderport land registry\n";

        var response = await PostFiles(staff, "/api/imports/past-panels", ("forecasts", Bytes(forecasts)), ("observations", Bytes(observations)));

        AssertRefused(@case, response, $"{file} row 2");
        Assert.Equal(before, await CountAsync(app));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteCsvImportTests(SqliteFixture fixture) : CsvImportTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresCsvImportTests(PostgresFixture fixture) : CsvImportTests(fixture);
