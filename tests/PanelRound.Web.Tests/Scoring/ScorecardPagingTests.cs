using System.Net;
using System.Text.Json.Nodes;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Scoring;

/// <summary><c>GET /api/scorecard</c> with <c>limit</c> and <c>offset</c>: pages of the whole scorecard, the default unchanged.</summary>
public abstract class ScorecardPagingTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task Paging_IsASliceOfTheWholeScorecard_DefaultListsEveryone_BadValuesAre400NamingTheField()
    {
        var app = await StartDemoAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);

        var whole = await reviewer.GetOk("/api/scorecard");
        var experts = whole["experts"]!.AsArray();
        Assert.True(experts.Count >= 8);
        Assert.Equal(experts.Count, (int)whole["total"]!);
        Assert.Equal(0, (int)whole["offset"]!);
        Assert.Null(whole["limit"]);

        var page = await reviewer.GetOk("/api/scorecard?limit=4&offset=3");
        Assert.Equal(experts.Count, (int)page["total"]!);
        Assert.Equal(4, (int)page["limit"]!);
        var slice = page["experts"]!.AsArray();
        Assert.Equal(4, slice.Count);
        for (var i = 0; i < 4; i++)
        {
            // The same expert with the same figures (rank and weight are those of the whole scorecard).
            Assert.True(JsonNode.DeepEquals(experts[3 + i], slice[i]), $"row {3 + i} differs");
        }
        Assert.True(JsonNode.DeepEquals(whole["consensus"], page["consensus"]));
        Assert.Empty((await reviewer.GetOk($"/api/scorecard?offset={experts.Count}"))["experts"]!.AsArray());

        foreach (var (query, field) in new[] { ("limit=0", "limit"), ("limit=1001", "limit"), ("offset=-1", "offset"), ("limit=abc", "limit") })
        {
            using var response = await reviewer.GetAsync($"/api/scorecard?{query}");
            Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
            var problem = JsonNode.Parse(await response.Content.ReadAsStringAsync())!;
            Assert.NotNull(problem["errors"]![field]);
        }
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteScorecardPagingTests(SqliteFixture f) : ScorecardPagingTests(f);

[Collection(PostgresCollection.Name)]
public sealed class PostgresScorecardPagingTests(PostgresFixture f) : ScorecardPagingTests(f);
