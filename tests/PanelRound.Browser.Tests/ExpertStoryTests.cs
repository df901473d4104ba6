using Microsoft.EntityFrameworkCore;
using Microsoft.Playwright;

namespace PanelRound.Browser.Tests;

/// <summary>
/// The expert's story in Chromium, at a laptop's and a phone's width: through the personal link, with the comma as
/// the decimal mark, an error on the last question of the form is summarised at the top with a link to its field;
/// once corrected the answers are stored exactly as typed, and a later revision replaces them.
/// </summary>
public sealed class ExpertStoryTests(BrowserApp app) : IClassFixture<BrowserApp>
{
    [SkippableTheory]
    [InlineData(1366, 0)]
    [InlineData(375, 1)]
    public async Task CommaDecimals_ErrorFarDown_Corrected_ThenRevised(int width, int member)
    {
        app.Require();
        var open = app.Scenario.Panels.Single(p => !p.Concluded);
        var answered = app.Scenario.Estimates.Where(e => e.Panel == open.Key && e.Round == 2).Select(e => e.Expert).ToHashSet();
        var who = open.Members.Where(m => !answered.Contains(m.Expert)).ElementAt(member);
        var watched = await app.NewPageAsync(width);
        var page = watched.Page;
        page.Dialog += (_, d) => d.AcceptAsync();
        await page.GotoAsync($"{app.BaseUrl}/e/{who.Token}");
        await Assertions.Expect(page.Locator("h1")).ToHaveTextAsync(open.Title);
        await Assertions.Expect(page.Locator("#round-status")).ToContainTextAsync("closes in");

        // The comma as the decimal mark: the first value is typed "5159,9" and read back before submitting.
        await page.SelectOptionAsync("#decimals", "comma");
        var first = page.Locator("#a0-p0-value");
        await first.FillAsync("5159,9");
        await Assertions.Expect(page.Locator("#a0-p0-value-echo")).ToContainTextAsync("5");
        await Assertions.Expect(page.Locator("#a0-p0-value-echo")).Not.ToContainTextAsync("not a number");
        foreach (var rationale in await page.Locator("textarea[name$='.Rationale']").AllAsync())
        {
            if (string.IsNullOrEmpty(await rationale.InputValueAsync()))
            {
                await rationale.FillAsync("Kept from round 1: my view has not changed.");
            }
        }

        // An error on the last input of the form, a screen or more further down.
        var last = page.Locator("#answers-form input[name^='Answers['][name$='.Value'], #answers-form input[name$='.P90']").Last;
        var lastId = await last.GetAttributeAsync("id");
        var kept = await last.InputValueAsync();
        await last.FillAsync("99999999");
        await page.ClickAsync("#submit-answers");
        var summary = page.Locator("#error-summary");
        await Assertions.Expect(summary).ToBeVisibleAsync();
        await Assertions.Expect(summary).ToBeFocusedAsync();
        await Assertions.Expect(summary.Locator($"a[href='#{lastId}']")).ToBeVisibleAsync();
        await watched.CheckAsync("story-expert-error-summary");
        await summary.Locator($"a[href='#{lastId}']").ClickAsync();
        await Assertions.Expect(page.Locator($"#{lastId}")).ToBeFocusedAsync();

        // Corrected: the answers are stored, the comma entry exactly.
        await page.Locator($"#{lastId}").FillAsync(kept);
        await page.Locator("#a0-p0-value").FillAsync("5159,9");
        await page.ClickAsync("#submit-answers");
        await Assertions.Expect(page.Locator("#saved")).ToContainTextAsync("Submitted for round 2");
        Assert.Equal(5159.9, await StoredFirstValueAsync(who.Token));
        await watched.CheckAsync("story-expert-submitted");

        // A revision replaces it.
        await page.Locator("#a0-p0-value").FillAsync("5200,5");
        await page.ClickAsync("#submit-answers");
        await Assertions.Expect(page.Locator("#saved")).ToContainTextAsync("Submitted for round 2");
        Assert.Equal(5200.5, await StoredFirstValueAsync(who.Token));
        watched.AssertNothingBlocked();
        await watched.CloseAsync();
    }

    /// <summary>The latest submitted value of the panel's first question and period for the expert with that link.</summary>
    private Task<double?> StoredFirstValueAsync(string token)
    {
        var panel = app.Scenario.Panels.Single(p => p.Members.Any(m => m.Token == token));
        var member = panel.Members.Single(m => m.Token == token);
        var period = panel.TargetPeriods.Split(',')[0];
        return app.WithDbAsync(async db =>
        {
            var membership = await db.Memberships.SingleAsync(m => m.PanelCode == member.PanelCode);
            var question = await db.Questions.Where(q => q.PanelId == membership.PanelId).OrderBy(q => q.Order).FirstAsync();
            return await db.Estimates.Where(e => e.MembershipId == membership.Id && e.QuestionId == question.Id && e.Period == period && !e.IsDraft)
                .OrderByDescending(e => e.Id).Select(e => e.Value).FirstAsync();
        });
    }
}
