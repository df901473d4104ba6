using System.Net;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Identity;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>A browser-like client for the pages: cookies, the sign-in form and the form's antiforgery token.</summary>
public static partial class StaffCookieClient
{
    public const string Password = "a-long-staff-password-42";

    /// <summary>A client signed in through the sign-in page as a new staff member with the role.</summary>
    public static async Task<HttpClient> SignedInAsync(TestApp app, string role)
    {
        var email = $"{role.ToLowerInvariant()}-{Guid.NewGuid():N}@panel.example";
        using (var scope = app.Services.CreateScope())
        {
            await StaffAccounts.EnsureRolesAsync(scope.ServiceProvider);
            var users = scope.ServiceProvider.GetRequiredService<UserManager<StaffUser>>();
            var created = await StaffAccounts.CreateAsync(users, email, $"Test {role}", Password, [role]);
            Assert.True(created.Succeeded, string.Join("; ", created.Errors.Select(e => e.Description)));
        }
        var client = app.Client();
        var token = await TokenFromAsync(client, "/Account/Login");
        var response = await client.PostAsync("/Account/Login", new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Input.Email"] = email,
            ["Input.Password"] = Password,
            ["__RequestVerificationToken"] = token,
        }));
        Assert.True(response.StatusCode == HttpStatusCode.Redirect && response.Headers.Location?.OriginalString.StartsWith("/Account/Login", StringComparison.Ordinal) != true,
            $"Sign-in as {role}: {(int)response.StatusCode} {response.Headers.Location}");
        return client;
    }

    /// <summary>The antiforgery token of a form on the page (the antiforgery cookie stays in the client).</summary>
    public static async Task<string> TokenFromAsync(HttpClient client, string page)
    {
        var response = await client.GetAsync(page);
        var html = await response.Content.ReadAsStringAsync();
        Assert.True(response.StatusCode == HttpStatusCode.OK, $"GET {page}: {(int)response.StatusCode}");
        var match = AntiForgery().Match(html);
        Assert.True(match.Success, $"GET {page} has no form with an antiforgery token.");
        return match.Groups[1].Value;
    }

    /// <summary>Posts a form with the token, as the page's own form would.</summary>
    public static Task<HttpResponseMessage> PostFormAsync(this HttpClient client, string url, string token, IEnumerable<KeyValuePair<string, string>> fields) =>
        client.PostAsync(url, new FormUrlEncodedContent(fields.Append(new("__RequestVerificationToken", token))));

    [GeneratedRegex("name=\"__RequestVerificationToken\" type=\"hidden\" value=\"([^\"]+)\"")]
    private static partial Regex AntiForgery();
}
