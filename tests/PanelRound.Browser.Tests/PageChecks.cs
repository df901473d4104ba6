using System.Text;
using Deque.AxeCore.Playwright;
using Microsoft.Playwright;

namespace PanelRound.Browser.Tests;

/// <summary>What every main page is checked for in the browser: accessibility (axe-core) and a kept screenshot.</summary>
public static class PageChecks
{
    /// <summary>
    /// Where screenshots are kept: <c>PANELROUND_SCREENSHOTS</c> when set, else <c>artifacts/screenshots</c> at the
    /// repository's root (ignored by git; CI keeps the folder as an artifact). One sub-folder per width.
    /// </summary>
    public static string ScreenshotFolder
    {
        get
        {
            var configured = Environment.GetEnvironmentVariable("PANELROUND_SCREENSHOTS");
            if (!string.IsNullOrWhiteSpace(configured))
            {
                return configured;
            }
            var dir = new DirectoryInfo(AppContext.BaseDirectory);
            while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "PanelRound.sln")))
            {
                dir = dir.Parent;
            }
            return Path.Combine(dir?.FullName ?? Path.GetTempPath(), "artifacts", "screenshots");
        }
    }

    /// <summary>A full-page screenshot named <c>{width}/{name}.png</c>.</summary>
    public static async Task ShootAsync(this WatchedPage page, string name)
    {
        var folder = Path.Combine(ScreenshotFolder, page.Width.ToString(System.Globalization.CultureInfo.InvariantCulture));
        Directory.CreateDirectory(folder);
        await page.Page.ScreenshotAsync(new PageScreenshotOptions { Path = Path.Combine(folder, name + ".png"), FullPage = true });
    }

    /// <summary>
    /// Runs axe-core (Deque.AxeCore.Playwright, the WCAG 2.x A/AA rules and best practices) on the page and returns
    /// its serious and critical violations, one line per rule with the number of elements and the first of them.
    /// </summary>
    public static async Task<IReadOnlyList<string>> SeriousViolationsAsync(this WatchedPage page)
    {
        var result = await page.Page.RunAxe();
        return result.Violations
            .Where(v => v.Impact is "serious" or "critical")
            .Select(v => $"[{v.Impact}] {v.Id}: {v.Help}; {v.Nodes.Length} element(s), first {v.Nodes[0].Target} {Shorten(v.Nodes[0].Html)}")
            .ToList();
    }

    /// <summary>Takes the screenshot, then fails with every serious or critical axe-core violation listed.</summary>
    public static async Task CheckAsync(this WatchedPage page, string name)
    {
        await page.Page.WaitForLoadStateAsync(LoadState.NetworkIdle);
        await page.ShootAsync(name);
        var violations = await page.SeriousViolationsAsync();
        Assert.True(violations.Count == 0, Describe(name, page, violations));
        page.AssertNothingBlocked();
    }

    private static string Describe(string name, WatchedPage page, IReadOnlyList<string> violations)
    {
        var sb = new StringBuilder($"{name} at {page.Width} px ({page.Page.Url}): {violations.Count} serious or critical accessibility violations\n");
        foreach (var v in violations.Take(30))
        {
            sb.AppendLine(v);
        }
        return sb.ToString();
    }

    private static string Shorten(string html) => html.Length <= 160 ? html : html[..160] + "…";
}
