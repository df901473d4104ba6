using System.Net;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// The expert's form and submissions read the parts of a panel that no longer change from memory;
/// what does change must still show at once: a new or corrected observation in the reference
/// series, the next round with the previous round's feedback, the conclusion, a revoked link.
/// </summary>
public abstract class ExpertFormFreshnessTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static async Task<JsonNode> FormAsync(HttpClient expert, SmallPanel p) => await expert.GetOk($"/api/expert/panels/{p.PanelId}");

    private static List<(string Period, double Value)> Reference(JsonNode form) =>
        [.. form["questions"]![0]!["reference"]!.AsArray().Select(r => ((string)r!["period"]!, (double)r["value"]!))];

    [SkippableFact]
    public async Task ObservationRecordedOrCorrected_ShowsInTheReferenceSeriesAtOnce()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var indicator = await app.WithDbAsync(db => db.Questions.Where(q => q.Id == p.PointQuestion).Select(q => q.IndicatorId).SingleAsync());
        var expert = app.Client().WithExpertToken(p.Members[0].Token);
        Assert.Empty(Reference(await FormAsync(expert, p)));

        await p.Staff.PostOk($"/api/indicators/{indicator}/observations", new[] { new { period = "2024", value = 4100.0, source = "registry" } }, HttpStatusCode.OK);
        Assert.Equal([("2024", 4100.0)], Reference(await FormAsync(expert, p)));

        await p.Staff.PostOk($"/api/indicators/{indicator}/observations", new[] { new { period = "2024", value = 4150.0, source = "registry, revised" } }, HttpStatusCode.OK);
        Assert.Equal([("2024", 4150.0)], Reference(await FormAsync(expert, p)));
    }

    [SkippableFact]
    public async Task NextRoundAndConclusion_ShowAtOnce_AndAClosedRoundRefusesAnswers()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client();
        for (var i = 0; i < 3; i++)
        {
            await p.SubmitAsync(expert, i, 4000 + 100 * i);
        }
        expert.WithExpertToken(p.Members[0].Token);
        var first = await FormAsync(expert, p);
        Assert.Equal(1, (int)first["round"]!["number"]!);
        Assert.Null(first["questions"]![0]!["periods"]![0]!["feedback"]);

        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        var (closed, problem) = await expert.Post($"/api/expert/panels/{p.PanelId}/estimates", p.Submission(4050));
        Assert.Equal(HttpStatusCode.Conflict, closed);
        Assert.Contains("Round 1 closed", (string)problem!["detail"]!, StringComparison.Ordinal);

        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        var second = await FormAsync(expert, p);
        Assert.Equal(2, (int)second["round"]!["number"]!);
        Assert.Equal(1, (int)second["feedbackRound"]!);
        // Round 1's median of 4000, 4100 and 4200 (common practice: the middle value of three).
        Assert.Equal(4100.0, (double)second["questions"]![0]!["periods"]![0]!["feedback"]!["stats"]!["median"]!);
        await p.SubmitAsync(expert, 0, 4080);

        await p.Staff.PostOk($"/api/panels/{p.PanelId}/rounds/2/close", new { }, HttpStatusCode.OK);
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/conclude", new { }, HttpStatusCode.OK);
        var concluded = await FormAsync(expert, p);
        Assert.Equal("Concluded", (string)concluded["panelState"]!);
        Assert.False((bool)concluded["canAnswer"]!);
    }

    [SkippableFact]
    public async Task RevokedLink_RefusedAtOnce_EvenThoughThePanelIsInMemory()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 3);
        var expert = app.Client();
        await p.SubmitAsync(expert, 0, 4000);
        Task<int> StoredAsync() => app.WithDbAsync(db => db.Estimates.Where(e => e.MembershipId == p.Members[0].MembershipId).CountAsync());
        var stored = await StoredAsync();
        await p.Staff.PostOk($"/api/panels/{p.PanelId}/members/{p.Members[0].MembershipId}/revoke", new { }, HttpStatusCode.OK);

        var (status, _) = await expert.WithExpertToken(p.Members[0].Token).Post($"/api/expert/panels/{p.PanelId}/estimates", p.Submission(4050));

        Assert.Equal(HttpStatusCode.NotFound, status);
        Assert.Equal(2 * p.Periods.Length, stored);
        Assert.Equal(stored, await StoredAsync());
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteExpertFormFreshnessTests(SqliteFixture fixture) : ExpertFormFreshnessTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresExpertFormFreshnessTests(PostgresFixture fixture) : ExpertFormFreshnessTests(fixture);
