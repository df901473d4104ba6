using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Playwright;
using PanelRound.Data;
using PanelRound.Web.Demo;

// One browser story at a time: each starts its own app and Chromium, and the machine running CI has two cores.
[assembly: CollectionBehavior(DisableTestParallelization = true)]

namespace PanelRound.Browser.Tests;

/// <summary>
/// The app with the demo loaded, on a real port with its own SQLite file, and Debian's Chromium (never a
/// downloaded browser). One per test class (<c>IClassFixture&lt;BrowserApp&gt;</c>), so a class's stories
/// do not see another class's changes.
/// </summary>
public sealed class BrowserApp : IAsyncLifetime
{
    public const string Chromium = "/usr/bin/chromium";

    /// <summary>The phone and laptop widths every main page is checked at.</summary>
    public static readonly int[] Widths = [1366, 375];

    private readonly string _db = Path.Combine(Path.GetTempPath(), $"panelround-browser-{Guid.NewGuid():N}.db");
    private WebApplicationFactory<Program>? _app;
    private IPlaywright? _playwright;
    private IBrowser? _browser;

    public string BaseUrl { get; private set; } = "";

    public static string DemoFolder => Path.Combine(AppContext.BaseDirectory, "demo-data");

    /// <summary>The demo scenario as the app loaded it (dates moved to today, as the loader does).</summary>
    public DemoScenario Scenario { get; } = DemoScenario.Read(DemoFolder).AsOf(DateTime.UtcNow);

    public IBrowser Browser => _browser ?? throw new InvalidOperationException("Call Require() first.");

    private static bool IsCi => string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase);

    public async Task InitializeAsync()
    {
        if (!File.Exists(Chromium))
        {
            return;
        }
        _app = new WebApplicationFactory<Program>().WithWebHostBuilder(b =>
        {
            b.UseEnvironment("Testing");
            b.UseSetting("Database:Provider", "Sqlite");
            b.UseSetting("ConnectionStrings:Sqlite", $"Data Source={_db}");
            b.UseSetting("Demo:Enabled", "true");
            // A plain-HTTP test server: cookies without the Secure flag, as in development.
            b.UseSetting("Security:SecureCookies", "false");
            b.UseSetting("Demo:Folder", DemoFolder);
            // A free port of the loopback interface, chosen by the system (several fixtures may run one after another).
            b.UseSetting("urls", "http://127.0.0.1:0");
        });
        _app.UseKestrel();
        _app.StartServer();
        BaseUrl = _app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First().Replace("[::]", "127.0.0.1", StringComparison.Ordinal);
        _playwright = await Playwright.CreateAsync();
        _browser = await _playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = Chromium,
            Headless = true,
            Args = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
        });
    }

    /// <summary>Skips where Chromium is missing, except under CI=true, where a missing browser fails the test.</summary>
    public void Require()
    {
        Skip.If(_browser is null && !IsCi, $"Browser test NOT RUN: {Chromium} is missing (apt-get install -y chromium). Under CI=true this is a failure.");
        Assert.True(_browser is not null, $"{Chromium} is missing: install Debian's chromium package.");
    }

    /// <summary>Reads the app's database (ids of the demo's panels and experts, a story's stored values).</summary>
    public async Task<T> WithDbAsync<T>(Func<PanelRoundDbContext, Task<T>> read)
    {
        await using var scope = _app!.Services.CreateAsyncScope();
        return await read(scope.ServiceProvider.GetRequiredService<PanelRoundDbContext>());
    }

    /// <summary>A new browser context (its own cookies) at a width, watching for Content-Security-Policy refusals.</summary>
    public async Task<WatchedPage> NewPageAsync(int width)
    {
        var context = await Browser.NewContextAsync(new BrowserNewContextOptions
        {
            ViewportSize = new ViewportSize { Width = width, Height = 900 },
            AcceptDownloads = true,
            Locale = "en-GB",
            TimezoneId = "UTC",
        });
        var page = await context.NewPageAsync();
        var watched = new WatchedPage(page, width);
        page.Console += (_, m) =>
        {
            if (m.Text.Contains("Content Security Policy", StringComparison.Ordinal))
            {
                watched.Blocked.Add($"{page.Url} {m.Location}: {m.Text}");
            }
        };
        page.PageError += (_, e) => watched.Blocked.Add($"{page.Url}: script error {e}");
        return watched;
    }

    /// <summary>A staff member of the demo, signed in through the sign-in form.</summary>
    public async Task<WatchedPage> SignInAsync(string role, int width)
    {
        var staff = Scenario.Staff.Single(s => s.Role == role);
        var watched = await NewPageAsync(width);
        var page = watched.Page;
        await page.GotoAsync($"{BaseUrl}/Account/Login");
        await page.FillAsync("#Input_Email", staff.Email);
        await page.FillAsync("#Input_Password", staff.Password);
        await page.ClickAsync("button[type=submit]");
        await page.WaitForLoadStateAsync(LoadState.NetworkIdle);
        Assert.DoesNotContain("/Account/Login", page.Url, StringComparison.Ordinal);
        return watched;
    }

    public async Task DisposeAsync()
    {
        if (_browser is not null)
        {
            await _browser.CloseAsync();
        }
        _playwright?.Dispose();
        if (_app is not null)
        {
            await _app.DisposeAsync();
        }
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        File.Delete(_db);
    }
}

/// <summary>A page and what its scripts and the Content-Security-Policy complained about.</summary>
public sealed record WatchedPage(IPage Page, int Width)
{
    public List<string> Blocked { get; } = [];

    /// <summary>No inline script or style was refused and no script failed.</summary>
    public void AssertNothingBlocked() => Assert.True(Blocked.Count == 0, string.Join("\n", Blocked));

    public async Task CloseAsync() => await Page.Context.CloseAsync();
}
