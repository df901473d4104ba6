using System.Collections.Concurrent;
using System.Net;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.AspNetCore.TestHost;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>
/// Staff sign-in does the same work for an unknown address as for a known one, and failed
/// attempts never lock the owner out.
/// </summary>
public abstract partial class StaffSignInTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private const string Email = "fiona@panel.example";
    private const string Password = "a-long-staff-pass-42";
    private const string Failed = "Email or password is wrong.";

    /// <summary>The app's password hasher, counting its verifications.</summary>
    private sealed class CountingHasher(Counter counter, IPasswordHasher<StaffUser> inner) : IPasswordHasher<StaffUser>
    {
        public string HashPassword(StaffUser user, string password) => inner.HashPassword(user, password);

        public PasswordVerificationResult VerifyHashedPassword(StaffUser user, string hashedPassword, string providedPassword)
        {
            Interlocked.Increment(ref counter.Verifications);
            return inner.VerifyHashedPassword(user, hashedPassword, providedPassword);
        }
    }

    private sealed class Counter
    {
        public int Verifications;
    }

    /// <summary>The system clock, noting every timer the app asks it for.</summary>
    private sealed class TimerNotingClock : TimeProvider
    {
        public ConcurrentQueue<TimeSpan> Timers { get; } = new();

        public override ITimer CreateTimer(TimerCallback callback, object? state, TimeSpan dueTime, TimeSpan period)
        {
            Timers.Enqueue(dueTime);
            return TimeProvider.System.CreateTimer(callback, state, dueTime, period);
        }
    }

    /// <summary>The app with some services replaced; disposing it stops both hosts.</summary>
    private sealed record Started(TestApp App, WebApplicationFactory<Program> Factory) : IAsyncDisposable
    {
        public async ValueTask DisposeAsync()
        {
            await Factory.DisposeAsync();
            await App.DisposeAsync();
        }
    }

    /// <summary>The app with some services replaced, and one facilitator account.</summary>
    private async Task<Started> StartWithAsync(
        Action<IServiceCollection> services, Dictionary<string, string?>? settings = null)
    {
        var app = new TestApp(Provider, await NewDatabaseAsync(), settings);
        var factory = app.WithWebHostBuilder(b => b.ConfigureTestServices(services));
        using var scope = factory.Services.CreateScope();
        await StaffAccounts.EnsureRolesAsync(scope.ServiceProvider);
        var created = await StaffAccounts.CreateAsync(scope.ServiceProvider.GetRequiredService<UserManager<StaffUser>>(), Email, "Fiona", Password, [Roles.Facilitator]);
        Assert.True(created.Succeeded, string.Join(" ", created.Errors.Select(e => e.Description)));
        return new Started(app, factory);
    }

    private static async Task<HttpResponseMessage> SignInAsync(HttpClient client, string email, string password)
    {
        var form = await client.GetStringAsync("/Account/Login");
        var token = AntiForgery().Match(form).Groups[1].Value;
        return await client.PostAsync("/Account/Login", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Input.Email"] = email,
            ["Input.Password"] = password,
            ["__RequestVerificationToken"] = token,
        }));
    }

    private static HttpClient ClientOf(WebApplicationFactory<Program> factory) =>
        factory.CreateClient(new WebApplicationFactoryClientOptions { AllowAutoRedirect = false, HandleCookies = true });

    [SkippableFact]
    public async Task SignIn_WrongPassword_KnownAndUnknownAddress_EachVerifiesOnePasswordHashAndAnswersAlike()
    {
        var counter = new Counter();
        await using var started = await StartWithAsync(s => s.AddScoped<IPasswordHasher<StaffUser>>(sp =>
            new CountingHasher(counter, new PasswordHasher<StaffUser>(sp.GetService<IOptions<PasswordHasherOptions>>()))));
        var client = ClientOf(started.Factory);

        var answers = new List<string>();
        foreach (var email in new[] { Email, "nobody@panel.example", Email.ToUpperInvariant(), "someone.else@elsewhere.example" })
        {
            var before = Volatile.Read(ref counter.Verifications);
            var response = await SignInAsync(client, email, "not-the-password-at-all");
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            var html = await response.Content.ReadAsStringAsync();
            Assert.Contains(Failed, html, StringComparison.Ordinal);
            Assert.Equal(1, Volatile.Read(ref counter.Verifications) - before);
            answers.Add(Regex.Replace(Regex.Replace(html, "value=\"[^\"]*\"", "value=\"\""), "<input[^>]*Input_Email[^>]*>", ""));
        }
        // Apart from the echoed address and the fresh anti-forgery token, the page is the same.
        Assert.Single(answers.Distinct(StringComparer.Ordinal));

        var before2 = Volatile.Read(ref counter.Verifications);
        var ok = await SignInAsync(client, Email, Password);
        Assert.Equal(HttpStatusCode.Redirect, ok.StatusCode);
        Assert.Equal(1, Volatile.Read(ref counter.Verifications) - before2);
    }

    [SkippableFact]
    public async Task SignIn_TwentyWrongPasswords_TheRightPasswordStillSignsIn()
    {
        // Short delays so that twenty failures take little time; the policy is the same.
        await using var started = await StartWithAsync(_ => { }, new Dictionary<string, string?>
        {
            ["StaffSignIn:FirstDelay"] = "00:00:00.001",
            ["StaffSignIn:MaxDelay"] = "00:00:00.004",
        });
        var stranger = ClientOf(started.Factory);
        for (var i = 0; i < 20; i++)
        {
            var wrong = await SignInAsync(stranger, Email, $"guess-number-{i}-wrong");
            Assert.Equal(HttpStatusCode.OK, wrong.StatusCode);
            Assert.Contains(Failed, await wrong.Content.ReadAsStringAsync(), StringComparison.Ordinal);
        }

        var owner = ClientOf(started.Factory);
        var response = await SignInAsync(owner, Email, Password);
        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        Assert.Equal("/Staff/Panels", response.Headers.Location?.OriginalString);
        Assert.Equal(HttpStatusCode.OK, (await owner.GetAsync("/Staff/Panels")).StatusCode);
    }

    [SkippableFact]
    public async Task SignIn_RepeatedFailures_SlowedAlikeForKnownAndUnknownAddresses_NeverTheRightPassword()
    {
        var clock = new TimerNotingClock();
        var delay = TimeSpan.FromMilliseconds(123);
        await using var started = await StartWithAsync(s => s.AddSingleton<TimeProvider>(clock), new Dictionary<string, string?>
        {
            ["StaffSignIn:FreeFailures"] = "2",
            ["StaffSignIn:FirstDelay"] = "00:00:00.123",
            ["StaffSignIn:MaxDelay"] = "00:00:00.123",
        });
        var client = ClientOf(started.Factory);

        async Task<int> DelaysDuring(string email, string password)
        {
            var before = clock.Timers.ToArray().Count(t => t == delay);
            await SignInAsync(client, email, password);
            return clock.Timers.ToArray().Count(t => t == delay) - before;
        }

        foreach (var email in new[] { Email, "nobody@panel.example" })
        {
            Assert.Equal(0, await DelaysDuring(email, "wrong-one-first-try"));
            Assert.Equal(0, await DelaysDuring(email, "wrong-two-second-try"));
            Assert.Equal(1, await DelaysDuring(email, "wrong-three-third-try"));
            Assert.Equal(1, await DelaysDuring(email, "wrong-four-fourth-try"));
        }
        Assert.Equal(0, await DelaysDuring(Email, Password));
    }

    [GeneratedRegex("name=\"__RequestVerificationToken\" type=\"hidden\" value=\"([^\"]+)\"")]
    private static partial Regex AntiForgery();
}

[Collection(SqliteCollection.Name)]
public sealed class SqliteStaffSignInTests(SqliteFixture fixture) : StaffSignInTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresStaffSignInTests(PostgresFixture fixture) : StaffSignInTests(fixture);
