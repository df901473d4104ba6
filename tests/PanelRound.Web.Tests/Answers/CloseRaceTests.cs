using System.Net;
using Microsoft.EntityFrameworkCore;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;
using Xunit.Abstractions;

namespace PanelRound.Web.Tests.Answers;

/// <summary>
/// Submissions racing the round's close: each is either inside the frozen feedback or refused with
/// 409; never acknowledged and then missing, never half in, never another status.
/// </summary>
public abstract class CloseRaceTests(IDatabaseFixture fixture, ITestOutputHelper output) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task FiftySubmissionsRacingTheClose_AcknowledgedAreAllInTheFrozenN_RefusedAre409()
    {
        var app = await StartAsync();
        var p = await SmallPanel.CreateAsync(app, 50);
        var expert = app.Client();
        var started = 0;
        var closeAfter = new TaskCompletionSource();

        async Task<HttpStatusCode> SubmitAsync(int i)
        {
            await Task.Delay(i * 3);
            if (Interlocked.Increment(ref started) == 20)
            {
                closeAfter.SetResult();
            }
            using var request = new HttpRequestMessage(HttpMethod.Post, $"/api/expert/panels/{p.PanelId}/estimates")
            {
                Content = System.Net.Http.Json.JsonContent.Create(p.Submission(100 + i)),
            };
            request.Headers.Add("X-Expert-Token", p.Members[i].Token);
            using var response = await expert.SendAsync(request);
            return response.StatusCode;
        }
        async Task<HttpStatusCode> CloseAsync()
        {
            await closeAfter.Task;
            using var response = await p.Staff.PostAsync($"/api/panels/{p.PanelId}/rounds/1/close", new StringContent("{}", System.Text.Encoding.UTF8, "application/json"));
            return response.StatusCode;
        }

        var submissions = Enumerable.Range(0, 50).Select(SubmitAsync).ToList();
        var close = CloseAsync();
        var statuses = await Task.WhenAll(submissions);
        Assert.Equal(HttpStatusCode.OK, await close);

        var acknowledged = Enumerable.Range(0, 50).Where(i => statuses[i] == HttpStatusCode.OK).ToList();
        Assert.All(statuses, s => Assert.True(s is HttpStatusCode.OK or HttpStatusCode.Conflict, $"a submission answered {(int)s}"));
        var frozen = await app.WithDbAsync(db => db.FrozenFeedback.AsNoTracking().Where(f => f.QuestionId == p.PointQuestion).ToListAsync());
        Assert.Equal(p.Periods.Length, frozen.Count);
        Assert.All(frozen, f => Assert.Equal(acknowledged.Count, f.N));
        // Every stored answer belongs to an acknowledged submission, and every acknowledged one is stored whole.
        var stored = await app.WithDbAsync(db => db.Estimates.AsNoTracking().GroupBy(e => e.MembershipId).Select(g => new { g.Key, Rows = g.Count() }).ToListAsync());
        var ackMemberships = acknowledged.Select(i => p.Members[i].MembershipId).ToHashSet();
        Assert.Equal(ackMemberships.Order(), stored.Select(s => s.Key).Order());
        Assert.All(stored, s => Assert.Equal(p.Periods.Length * 2, s.Rows));
        output.WriteLine($"{acknowledged.Count} acknowledged and in the frozen n, {50 - acknowledged.Count} refused with 409.");
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteCloseRaceTests(SqliteFixture f, ITestOutputHelper o) : CloseRaceTests(f, o);

[Collection(PostgresCollection.Name)]
public sealed class PostgresCloseRaceTests(PostgresFixture f, ITestOutputHelper o) : CloseRaceTests(f, o);
