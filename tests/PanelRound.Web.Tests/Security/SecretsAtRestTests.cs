using System.Data.Common;
using System.Net;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data.Entities;
using PanelRound.Web.Demo;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Security;

/// <summary>
/// Secrets at rest: personal-link tokens, API keys and staff passwords are stored only as hashes,
/// found nowhere in clear in any text column of any table; and the demo's committed tokens and
/// passwords cannot work in Production.
/// </summary>
public abstract partial class SecretsAtRestTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    [SkippableFact]
    public async Task FullStory_EveryTextColumnOfEveryTable_HoldsNoTokenKeyOrPasswordInClear()
    {
        var app = await StartAsync();
        // Panel, experts and links issued (the facilitator's API key made along the way), answers given.
        var panel = await SmallPanel.CreateAsync(app, 4);
        await panel.SubmitAsync(app.Client(), 0, 4100.5);
        var staffKey = panel.Staff.DefaultRequestHeaders.Authorization!.Parameter!;
        var tokens = panel.Members.Select(m => m.Token).ToList();

        // Links re-issued (by the API, with the invitation mailed) and redeemed.
        var reissued = await panel.Staff.PostOk($"/api/panels/{panel.PanelId}/members/{panel.Members[1].MembershipId}/reissue", new { sendInvitation = true }, HttpStatusCode.OK);
        var newToken = (string)reissued["token"]!;
        tokens.Add(newToken);
        await StaffPages.ExpertClientAsync(app, newToken);
        await StaffPages.ExpertClientAsync(app, panel.Members[2].Token);

        // Staff sign-in through the page, and an API key created on the administration page (shown once).
        var admin = await StaffCookieClient.SignedInAsync(app, Roles.Administrator);
        var created = await admin.PostFormAsync("/Admin?handler=CreateKey", await StaffCookieClient.TokenFromAsync(admin, "/Admin"),
            [new("KeyName", "nightly export"), new("KeyRole", Roles.Reviewer)]);
        Assert.Equal(HttpStatusCode.Redirect, created.StatusCode);
        var pageKey = ApiKeyText().Match(await admin.GetStringAsync("/Admin")).Value;
        Assert.StartsWith(ApiKeyAuthenticationHandler.KeyPrefix, pageKey, StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.OK, (await app.Client(pageKey).GetAsync("/api/me")).StatusCode);
        var keys = new List<string> { staffKey, pageKey };

        // Stored as hashes: SHA-256 of the token or key (what the docs promise), and nothing else.
        var hashes = await app.WithDbAsync(async db => (
            Links: await db.Memberships.AsNoTracking().Where(m => m.PanelId == panel.PanelId).Select(m => m.TokenHash).ToListAsync(),
            Keys: await db.ApiKeys.AsNoTracking().Select(k => k.KeyHash).ToListAsync()));
        Assert.Contains(Secrets.Hash(newToken), hashes.Links);
        Assert.DoesNotContain(Secrets.Hash(panel.Members[1].Token), hashes.Links);
        foreach (var m in panel.Members.Where(m => m != panel.Members[1]))
        {
            Assert.Contains(Secrets.Hash(m.Token), hashes.Links);
        }
        Assert.All(keys, k => Assert.Contains(Secrets.Hash(k), hashes.Keys));

        // In clear nowhere: every text column of every table, read back as text.
        var secrets = tokens.Select(t => ("personal-link token", t)).Concat(keys.Select(k => ("API key", k)))
            .Append(("staff password", StaffCookieClient.Password)).ToList();
        var (columns, cells, found) = await ScanAsync(app, secrets);
        Console.WriteLine($"Secrets at rest ({Provider}): {columns} text columns, {cells} non-empty cells scanned for {secrets.Count} secrets.");
        Assert.True(columns >= 20 && cells > 50, $"Only {columns} columns and {cells} cells were scanned.");
        Assert.True(found.Count == 0, "Secrets in clear:\n" + string.Join('\n', found));
    }

    [SkippableFact]
    public async Task Production_DemoFilesPresent_CommittedDemoTokensAndPasswordsDoNotWork()
    {
        var demo = DemoScenario.Read(DatabaseFixture.DemoFolder);
        var open = demo.Panels.Single(p => !p.Concluded);
        var token = open.Members[0].Token;
        var production = new Dictionary<string, string?> { [TestApp.EnvironmentSetting] = "Production", ["Demo:Folder"] = DatabaseFixture.DemoFolder };

        // The demo switched on in Production: the app refuses to start rather than load public tokens and passwords.
        TestApp? started = null;
        var refused = await Record.ExceptionAsync(async () => started = await StartAsync(new Dictionary<string, string?>(production) { ["Demo:Enabled"] = "true" }));
        if (started is not null)
        {
            var opened = await started.Client().GetAsync($"/e/{token}");
            Assert.Fail($"Production started with the demo loaded; the committed token {token[..10]}... answered {(int)opened.StatusCode} {opened.Headers.Location}.");
        }
        Assert.NotNull(refused);
        Assert.Contains("Demo:Enabled", refused.ToString(), StringComparison.Ordinal);

        // Production with the demo files beside it, demo off: the committed link, token and staff password open nothing.
        var app = await StartAsync(production);
        var link = await app.Client().GetAsync($"/e/{token}");
        Assert.Equal(HttpStatusCode.Redirect, link.StatusCode);
        Assert.Contains("link-needed", link.Headers.Location?.OriginalString, StringComparison.Ordinal);
        var api = await app.Client().WithExpertToken(token).GetAsync("/api/expert/panels/1");
        Assert.Equal(HttpStatusCode.NotFound, api.StatusCode);
        var staff = demo.Staff[0];
        var client = app.Client();
        var signIn = await client.PostFormAsync("/Account/Login", await StaffCookieClient.TokenFromAsync(client, "/Account/Login"),
            [new("Input.Email", staff.Email), new("Input.Password", staff.Password)]);
        Assert.Equal(HttpStatusCode.Unauthorized, (await client.GetAsync("/api/me")).StatusCode);
        Assert.NotEqual(HttpStatusCode.InternalServerError, signIn.StatusCode);
        Assert.Equal(0, await app.WithDbAsync(db => db.Panels.CountAsync()));
    }

    /// <summary>Reads every string column of every table of the model (as raw text) and reports each secret found in clear, case-insensitively.</summary>
    private static Task<(int Columns, int Cells, List<string> Found)> ScanAsync(TestApp app, List<(string What, string Value)> secrets) => app.WithDbAsync(async db =>
    {
        var columns = 0;
        var cells = 0;
        var found = new List<string>();
        var connection = db.Database.GetDbConnection();
        await db.Database.OpenConnectionAsync();
        foreach (var entity in db.Model.GetEntityTypes().Where(t => t.GetTableName() is not null))
        {
            var table = entity.GetTableName()!;
            var store = Microsoft.EntityFrameworkCore.Metadata.StoreObjectIdentifier.Table(table, entity.GetSchema());
            foreach (var column in entity.GetProperties().Where(p => p.ClrType == typeof(string)).Select(p => p.GetColumnName(store)).OfType<string>().Distinct())
            {
                columns++;
                await using DbCommand command = connection.CreateCommand();
                command.CommandText = $"SELECT \"{column}\" FROM \"{table}\"";
                await using var reader = await command.ExecuteReaderAsync();
                while (await reader.ReadAsync())
                {
                    if (reader.IsDBNull(0) || reader.GetString(0) is not { Length: > 0 } text)
                    {
                        continue;
                    }
                    cells++;
                    found.AddRange(secrets.Where(s => text.Contains(s.Value, StringComparison.OrdinalIgnoreCase)).Select(s => $"{table}.{column}: a {s.What}"));
                }
            }
        }
        await db.Database.CloseConnectionAsync();
        return (columns, cells, found);
    });

    [GeneratedRegex("prk_[A-Za-z0-9_-]{20,}")]
    private static partial Regex ApiKeyText();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteSecretsAtRestTests(SqliteFixture fixture) : SecretsAtRestTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresSecretsAtRestTests(PostgresFixture fixture) : SecretsAtRestTests(fixture);
