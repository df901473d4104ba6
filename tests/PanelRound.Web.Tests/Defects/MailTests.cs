using System.Globalization;
using System.Net;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// Invitations and reminders when mail fails: the roster refuses addresses the mailer cannot
/// parse, a failed send never loses the one-time link or fails the request, and every send is
/// audited (<c>mail.sent</c> or <c>mail.failed</c>).
/// </summary>
public abstract class MailTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    /// <summary>
    /// Not addresses by RFC 5322 section 3.2.3 (dot-atom-text = 1*atext *("." 1*atext): no leading,
    /// trailing or doubled dot) and section 3.4.1 (addr-spec = local-part "@" domain).
    /// </summary>
    public static TheoryData<string> Unparseable => new()
    {
        "john..doe@example.com",
        ".john@example.com",
        "john.@example.com",
        "john@example..com",
    };

    /// <summary>An expert as legacy data would hold it: written to the database without the roster's validation.</summary>
    private static Task<int> InsertLegacyExpertAsync(TestApp app, string name, string email) =>
        app.WithDbAsync(async db =>
        {
            var expert = new Expert { Name = name, Email = email, CreatedAt = DateTime.UtcNow };
            db.Experts.Add(expert);
            await db.SaveChangesAsync();
            return expert.Id;
        });

    private static Task<List<AuditEvent>> MailAuditAsync(TestApp app) =>
        app.WithDbAsync(db => db.AuditEvents.AsNoTracking().Where(a => a.Action == "mail.sent" || a.Action == "mail.failed").OrderBy(a => a.Id).ToListAsync());

    [SkippableTheory]
    [MemberData(nameof(Unparseable))]
    public async Task CreateExpert_AddressTheMailerCannotParse_Is400NamingEmail_AndNothingIsSaved(string email)
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();

        var (status, problem) = await staff.Post("/api/experts", new { name = "Jo Dunmore", email });

        Assert.True(status == HttpStatusCode.BadRequest, $"{email}: {(int)status} {problem?.ToJsonString()}");
        Assert.True(problem!["errors"]!.AsObject().ContainsKey("email"), problem.ToJsonString());
        Assert.Equal(0, await app.WithDbAsync(db => db.Experts.CountAsync()));
        // A well-formed address (RFC 5322 section 3.4.1) is still accepted.
        await staff.PostOk("/api/experts", new { name = "Jo Dunmore", email = "jo.dunmore@calderport.example" });
    }

    [SkippableFact]
    public async Task AddMember_LegacyAddressTheMailerCannotParse_ReturnsTheLink_AndAuditsTheFailure()
    {
        var app = await StartAsync();
        var outbox = app.OutboxFolder;
        var staff = await app.StaffClientAsync();
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Harbour outlook", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!;
        var expertId = await InsertLegacyExpertAsync(app, "Jo Dunmore", "john..doe@example.com");

        var (status, link) = await staff.Post($"/api/panels/{panelId}/members", new { expertId, sendInvitation = true });

        Assert.True(status == HttpStatusCode.Created, $"{(int)status} {link?.ToJsonString()}");
        var token = (string)link!["token"]!;
        Assert.False(string.IsNullOrEmpty(token));
        // The link shown once is the one stored (its hash), and it opens the expert's form.
        var membership = await app.WithDbAsync(db => db.Memberships.AsNoTracking().SingleAsync());
        Assert.Equal(membership.Id, (int)link["membershipId"]!);
        await app.Client().WithExpertToken(token).GetOk($"/api/expert/panels/{panelId}");
        var audit = Assert.Single(await MailAuditAsync(app));
        Assert.Equal("mail.failed", audit.Action);
        Assert.Equal(membership.Id.ToString(CultureInfo.InvariantCulture), audit.EntityId);
        Assert.Empty(Directory.GetFiles(outbox, "*.eml"));

        // Re-issuing answers with a new link as well, and audits that send too.
        var (again, reissued) = await staff.Post($"/api/panels/{panelId}/members/{membership.Id}/reissue", new { sendInvitation = true });
        Assert.True(again == HttpStatusCode.OK, $"{(int)again} {reissued?.ToJsonString()}");
        Assert.NotEqual(token, (string)reissued!["token"]!);
        Assert.Equal(["mail.failed", "mail.failed"], (await MailAuditAsync(app)).Select(a => a.Action));
        Directory.Delete(outbox, recursive: true);
    }

    [SkippableFact]
    public async Task Reminders_OneUnparseableAddress_The200SendsTheOthers_AndAuditsEverySend()
    {
        var app = await StartAsync();
        var outbox = app.OutboxFolder;
        var staff = await app.StaffClientAsync();
        var indicatorId = (int)(await staff.PostOk("/api/indicators", new { key = "price-harbour", name = "Apartment price, harbour", unitLabel = "CU/m²", decimals = 0 }))["id"]!;
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Harbour outlook", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!;
        await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId, label = "Price per m²", format = "Point", hardMin = 1, hardMax = 100000 });
        var good = new List<(string Email, int MembershipId)>();
        foreach (var email in new[] { "ada.marrow@calderport.example", "ben.tallis@calderport.example" })
        {
            var expertId = (int)(await staff.PostOk("/api/experts", new { name = email.Split('@')[0], email }))["id"]!;
            good.Add((email, (int)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId, sendInvitation = false }))["membershipId"]!));
        }
        var legacyId = await InsertLegacyExpertAsync(app, "Jo Dunmore", "john..doe@example.com");
        var bad = (int)(await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = legacyId, sendInvitation = false }))["membershipId"]!;
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });

        var report = await staff.PostOk($"/api/panels/{panelId}/reminders", new { }, HttpStatusCode.OK);

        Assert.Equal(2, (int)report["sent"]!);
        Assert.Equal(1, (int)report["failed"]!);
        var mails = Directory.GetFiles(outbox, "*.eml").Select(File.ReadAllText).ToList();
        Assert.Equal(2, mails.Count);
        foreach (var (email, _) in good)
        {
            Assert.Single(mails, m => m.Contains(email, StringComparison.Ordinal));
        }
        var audit = await MailAuditAsync(app);
        Assert.Equal(3, audit.Count);
        Assert.Equal(good.Select(g => g.MembershipId.ToString(CultureInfo.InvariantCulture)).Order(),
            audit.Where(a => a.Action == "mail.sent").Select(a => a.EntityId).Order());
        Assert.Equal(bad.ToString(CultureInfo.InvariantCulture), Assert.Single(audit, a => a.Action == "mail.failed").EntityId);
        Directory.Delete(outbox, recursive: true);
    }

    /// <summary>A mail relay that refuses every message with an error the workflow has not seen before.</summary>
    private sealed class RefusingMailer : IMailer
    {
        public Task SendAsync(MailMessageData message, CancellationToken ct = default) =>
            throw new InvalidOperationException("The relay refused the message.");
    }

    [SkippableFact]
    public async Task AddMemberAndReissue_AnyMailerException_ReturnTheLink_AndAuditTheFailure()
    {
        await using var app = new TestApp(Provider, await NewDatabaseAsync(),
            testServices: s => s.AddSingleton<IMailer, RefusingMailer>());
        var staff = await app.StaffClientAsync();
        var panelId = (int)(await staff.PostOk("/api/panels", new { title = "Harbour outlook", startsOn = "2026-11-02", targetPeriods = "2027" }))["id"]!;
        var expertId = (int)(await staff.PostOk("/api/experts", new { name = "Ada Marrow", email = "ada.marrow@calderport.example" }))["id"]!;

        var (status, link) = await staff.Post($"/api/panels/{panelId}/members", new { expertId, sendInvitation = true });
        Assert.True(status == HttpStatusCode.Created, $"{(int)status} {link?.ToJsonString()}");
        await app.Client().WithExpertToken((string)link!["token"]!).GetOk($"/api/expert/panels/{panelId}");

        var (again, reissued) = await staff.Post($"/api/panels/{panelId}/members/{(int)link["membershipId"]!}/reissue", new { sendInvitation = true });
        Assert.True(again == HttpStatusCode.OK, $"{(int)again} {reissued?.ToJsonString()}");
        await app.Client().WithExpertToken((string)reissued!["token"]!).GetOk($"/api/expert/panels/{panelId}");

        var audit = await MailAuditAsync(app);
        Assert.Equal(["mail.failed", "mail.failed"], audit.Select(a => a.Action));
        Assert.All(audit, a => Assert.Contains("relay refused", a.Details, StringComparison.Ordinal));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteMailTests(SqliteFixture fixture) : MailTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresMailTests(PostgresFixture fixture) : MailTests(fixture);
