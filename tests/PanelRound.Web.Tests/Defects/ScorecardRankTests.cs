using System.Globalization;
using System.Net;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data.Entities;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>An expert's scorecard page shows the rank the scorecard list gives that expert.</summary>
public abstract partial class ScorecardRankTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task ExpertPage_EveryScoredDemoExpert_ShowsTheRankOfTheList()
    {
        var app = await StartDemoAsync();
        var reviewer = await app.StaffClientAsync(Roles.Reviewer);
        var list = (await reviewer.GetOk("/api/scorecard"))["experts"]!.AsArray()
            .Select(e => (Key: (string)e!["expert"]!, Ranked: (bool)e["ranked"]!, Rank: (int?)e["rank"]))
            .ToList();
        var ids = await app.WithDbAsync(db => db.Experts.Where(e => e.ExternalKey != null).ToDictionaryAsync(e => e.ExternalKey!, e => e.Id));

        // The list ranks several experts differently, so a page that always says "rank 1" cannot pass.
        Assert.True(list.Count(e => e.Ranked) >= 3, "The demo ranks at least three experts.");
        Assert.True(list.Where(e => e.Ranked).Select(e => e.Rank).Distinct().Count() >= 3, "The demo's ranks differ.");

        foreach (var (key, ranked, rank) in list)
        {
            var response = await reviewer.GetAsync($"/Staff/Scorecard/Expert/{ids[key]}");
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var html = await response.Content.ReadAsStringAsync();
            var shown = RankText().Match(html);
            if (ranked)
            {
                Assert.True(shown.Success, $"{key}: the page shows no rank.");
                Assert.Equal(rank, int.Parse(shown.Groups[1].Value, CultureInfo.InvariantCulture));
            }
            else
            {
                Assert.False(shown.Success, $"{key} is not ranked in the list but its page shows rank {shown.Groups[1].Value}.");
                Assert.Contains("not ranked", html, StringComparison.Ordinal);
            }
        }
    }

    [GeneratedRegex(@">rank (\d+)<")]
    private static partial Regex RankText();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteScorecardRankTests(SqliteFixture fixture) : ScorecardRankTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresScorecardRankTests(PostgresFixture fixture) : ScorecardRankTests(fixture);
