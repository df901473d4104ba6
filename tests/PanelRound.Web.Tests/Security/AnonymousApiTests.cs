using System.Net;
using System.Text;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>A call with no credential at all is anonymous: 401 with a ProblemDetails, never 400 or 404, and it changes nothing.</summary>
public abstract class AnonymousApiTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task StaffWrite_NoCredentialNoCookie_Is401NotMissingHeader400()
    {
        var app = await StartAsync();
        var response = await app.Client().PostAsync("/api/indicators",
            new StringContent("""{"key":"anon-write","name":"Anonymous write","unitLabel":"%","decimals":1}""", Encoding.UTF8, "application/json"));

        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        Assert.Equal(0, await app.WithDbAsync(db => Task.FromResult(db.Indicators.Count())));
    }

    [SkippableFact]
    public async Task ExpertApi_NoTokenNoCookie_Is401ProblemDetails()
    {
        var app = await StartAsync();
        var panel = await SmallPanel.CreateAsync(app, 3);

        var read = await app.Client().GetAsync($"/api/expert/panels/{panel.PanelId}");
        var write = await app.Client().PostAsync($"/api/expert/panels/{panel.PanelId}/estimates", new StringContent("{}", Encoding.UTF8, "application/json"));

        Assert.Equal(HttpStatusCode.Unauthorized, read.StatusCode);
        Assert.Equal("application/problem+json", read.Content.Headers.ContentType?.MediaType);
        Assert.Equal(HttpStatusCode.Unauthorized, write.StatusCode);
        // A token that opens nothing is still refused as unknown, and the expert's own token still works.
        Assert.Equal(HttpStatusCode.NotFound, (await app.Client().WithExpertToken("not-a-token").GetAsync($"/api/expert/panels/{panel.PanelId}")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await app.Client().WithExpertToken(panel.Members[0].Token).GetAsync($"/api/expert/panels/{panel.PanelId}")).StatusCode);
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteAnonymousApiTests(SqliteFixture fixture) : AnonymousApiTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresAnonymousApiTests(PostgresFixture fixture) : AnonymousApiTests(fixture);
