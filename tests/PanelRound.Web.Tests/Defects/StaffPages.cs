using System.Net;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>Staff and expert browser sessions for page tests: a real sign-in through the page, cookies kept, antiforgery tokens read from forms.</summary>
internal static partial class StaffPages
{
    /// <summary>A client signed in on the sign-in page as a new staff member of the role.</summary>
    public static async Task<HttpClient> SignedInClientAsync(TestApp app, string role)
    {
        var email = $"{role.ToLowerInvariant()}-{Guid.NewGuid():N}@staff.example";
        const string password = "a-long-test-password-42";
        await StaffAccounts.EnsureRolesAsync(app.Services);
        using (var scope = app.Services.CreateScope())
        {
            var users = scope.ServiceProvider.GetRequiredService<UserManager<StaffUser>>();
            var created = await StaffAccounts.CreateAsync(users, email, role, password, [role]);
            Assert.True(created.Succeeded, string.Join("; ", created.Errors.Select(e => e.Description)));
        }
        var client = app.Client();
        var token = TokenOf(await client.GetStringAsync("/Account/Login"));
        var response = await client.PostAsync("/Account/Login", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Input.Email"] = email,
            ["Input.Password"] = password,
            ["__RequestVerificationToken"] = token,
        }));
        Assert.Equal(HttpStatusCode.Redirect, response.StatusCode);
        return client;
    }

    /// <summary>A client holding an expert's link cookie (the link redeemed at /e/{token}).</summary>
    public static async Task<HttpClient> ExpertClientAsync(TestApp app, string linkToken)
    {
        var client = app.Client();
        var redeemed = await client.GetAsync($"/e/{linkToken}");
        Assert.True(redeemed.StatusCode is HttpStatusCode.Redirect or HttpStatusCode.OK, $"/e/ answered {(int)redeemed.StatusCode}");
        return client;
    }

    public static string TokenOf(string html) => AntiForgery().Match(html) is { Success: true } m ? m.Groups[1].Value : throw new InvalidOperationException("No antiforgery token on the page.");

    [GeneratedRegex("name=\"__RequestVerificationToken\" type=\"hidden\" value=\"([^\"]+)\"")]
    private static partial Regex AntiForgery();
}
