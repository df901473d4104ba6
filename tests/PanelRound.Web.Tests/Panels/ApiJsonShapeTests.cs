using System.Net;
using System.Text.Json.Nodes;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Panels;

/// <summary>
/// The API's JSON carries enums as their names everywhere (as the request bodies already do, e.g.
/// <c>outlierRule = "TukeyFences"</c>), and its objects are the API's own: a panel's settings and a
/// period's published consensus keep the fields they have always had.
/// </summary>
public abstract class ApiJsonShapeTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly string[] SettingsFields =
        ["outlierRule", "trimFraction", "consensusThreshold", "stabilityThreshold", "roundCap", "minimumGroupSize", "showRationales", "outliersMustJustify", "weighting",
         "showBenchmarkToExperts", "expertBenchmark", "benchmarkWindow", "relationTolerance",
         "calibrationCutoff", "calibrationOvershoot", "calibrationUsesFirstRound"];

    private static readonly string[] ConsensusFields = ["id", "panelId", "questionId", "period", "value", "low", "high", "n", "method", "publishedAt"];

    private static readonly string[] StopReasons = ["KeepGoing", "ConsensusReached", "Stable", "RoundCapReached"];

    private static string[] Fields(JsonNode? node) => [.. node!.AsObject().Select(p => p.Key).Order(StringComparer.Ordinal)];

    [SkippableFact]
    public async Task PanelFormAndResults_EnumsAreNames_SettingsAndConsensusKeepTheirFields()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client();
        for (var i = 0; i < 3; i++)
        {
            await p.SubmitAsync(expert, i, 100 + i);
        }

        var panel = await p.Staff.GetOk($"/api/panels/{p.PanelId}");
        Assert.Equal(SettingsFields.Order(StringComparer.Ordinal), Fields(panel["settings"]));
        Assert.Equal("TukeyFences", (string)panel["settings"]!["outlierRule"]!);
        Assert.Equal("Equal", (string)panel["settings"]!["weighting"]!);

        var form = await app.Client().WithExpertToken(p.Members[0].Token).GetOk($"/api/expert/panels/{p.PanelId}");
        Assert.Equal("Running", (string)form["panelState"]!);
        Assert.Equal("Point", (string)form["questions"]![0]!["format"]!);
        Assert.Equal("Range", (string)form["questions"]![1]!["format"]!);

        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);
        var results = await p.Staff.GetOk($"/api/panels/{p.PanelId}/results");
        Assert.Equal("Concluded", (string)results["state"]!);
        Assert.Equal(SettingsFields.Order(StringComparer.Ordinal), Fields(results["settings"]));
        Assert.Equal("TukeyFences", (string)results["settings"]!["outlierRule"]!);
        var question = results["questions"]![0]!;
        Assert.Equal("Point", (string)question["format"]!);
        Assert.Contains((string)question["suggestion"]!, StopReasons);
        var period = question["periods"]![0]!;
        Assert.Contains((string)period["suggestion"]!["reason"]!, StopReasons);
        Assert.Equal(ConsensusFields.Order(StringComparer.Ordinal), Fields(period["consensus"]));
        Assert.Equal(p.PanelId, (int)period["consensus"]!["panelId"]!);
        Assert.Equal(p.PointQuestion, (int)period["consensus"]!["questionId"]!);
        Assert.Equal(101, (double)period["consensus"]!["value"]!);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteApiJsonShapeTests(SqliteFixture fixture) : ApiJsonShapeTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresApiJsonShapeTests(PostgresFixture fixture) : ApiJsonShapeTests(fixture);
