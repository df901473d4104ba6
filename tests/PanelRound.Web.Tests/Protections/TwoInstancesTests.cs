using System.Net;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Defects;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Protections;

/// <summary>
/// Two app instances on one PostgreSQL database, as behind a load balancer: a round at its
/// deadline closes exactly once, a cookie issued by one instance is read by the other, and the
/// shared data-protection keys are encrypted at rest with the configured certificate.
/// </summary>
[Collection(PostgresCollection.Name)]
public sealed class TwoInstancesTests(PostgresFixture fixture) : IAsyncDisposable
{
    private readonly List<TestApp> _apps = [];

    [SkippableFact]
    public async Task TwoInstances_DeadlineClosesOnce_CookieReadByTheOther_KeysEncryptedAtRest()
    {
        var database = await fixture.NewDatabaseAsync();
        var certificate = Path.Combine(Path.GetTempPath(), $"panelround-dp-{Guid.NewGuid():N}.pfx");
        using (var rsa = RSA.Create(2048))
        {
            var request = new CertificateRequest("CN=PanelRound data protection (test)", rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
            using var cert = request.CreateSelfSigned(DateTimeOffset.UtcNow.AddDays(-1), DateTimeOffset.UtcNow.AddYears(1));
            await File.WriteAllBytesAsync(certificate, cert.Export(X509ContentType.Pfx, "test-password"));
        }
        var settings = new Dictionary<string, string?>
        {
            ["DataProtection:CertificatePath"] = certificate,
            ["DataProtection:CertificatePassword"] = "test-password",
        };
        var clockA = new TestClock();
        var clockB = new TestClock();
        var a = Start(database, settings, clockA);
        var b = Start(database, settings, clockB);

        var panel = await SmallPanel.CreateAsync(a, 3);
        var expert = a.Client();
        for (var i = 0; i < 3; i++)
        {
            await panel.SubmitAsync(expert, i, 100 + i);
        }

        // A cookie issued by A (the expert's link) is read by B.
        var plainA = a.CreateClient(new Microsoft.AspNetCore.Mvc.Testing.WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = false });
        using var link = await plainA.GetAsync($"/e/{panel.Members[0].Token}");
        Assert.Equal(HttpStatusCode.Redirect, link.StatusCode);
        var cookie = link.Headers.GetValues("Set-Cookie").Single(c => c.StartsWith("panelround.expert=", StringComparison.Ordinal)).Split(';')[0];
        var plainB = b.CreateClient(new Microsoft.AspNetCore.Mvc.Testing.WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = false });
        using var read = new HttpRequestMessage(HttpMethod.Get, $"/api/expert/panels/{panel.PanelId}");
        read.Headers.Add("Cookie", cookie);
        read.Headers.Add(CookieApiGuard.Header, "XMLHttpRequest");
        using var answer = await plainB.SendAsync(read);
        Assert.True(answer.StatusCode == HttpStatusCode.OK, $"B refused A's cookie: {(int)answer.StatusCode}");

        // The deadline passes for both; both deadline services run at once: the round closes once.
        clockA.Advance(TimeSpan.FromDays(8));
        clockB.Advance(TimeSpan.FromDays(8));
        var closers = await Task.WhenAll(
            a.Services.GetRequiredService<RoundDeadlineService>().CloseDueRoundsAsync(),
            b.Services.GetRequiredService<RoundDeadlineService>().CloseDueRoundsAsync());
        Assert.Equal(1, closers.Sum());
        var (closedAudits, feedbackRows) = await a.WithDbAsync(async db => (
            await db.AuditEvents.CountAsync(e => e.Action == "round.closed"),
            await db.FrozenFeedback.CountAsync()));
        Assert.Equal(1, closedAudits);
        Assert.Equal(2 * panel.Periods.Length, feedbackRows);
        Assert.Equal(0, await b.Services.GetRequiredService<RoundDeadlineService>().CloseDueRoundsAsync());

        // The key ring both read is encrypted with the certificate: no key material in clear.
        var keys = await a.WithDbAsync(db => db.DataProtectionKeys.Select(k => k.Xml!).ToListAsync());
        Assert.NotEmpty(keys);
        Assert.All(keys, xml =>
        {
            Assert.Contains("encryptedSecret", xml, StringComparison.Ordinal);
            Assert.DoesNotContain("<masterKey", xml, StringComparison.Ordinal);
        });
        File.Delete(certificate);
    }

    private TestApp Start(string database, Dictionary<string, string?> settings, TestClock clock)
    {
        var app = new TestApp(fixture.Provider, database, settings, clock: clock);
        _apps.Add(app);
        _ = app.Server;
        return app;
    }

    public async ValueTask DisposeAsync()
    {
        foreach (var app in _apps)
        {
            await app.DisposeAsync();
        }
    }
}
