using System.Net;
using System.Text.RegularExpressions;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>Staff and expert browser sessions for page tests: a real sign-in through the page, cookies kept, antiforgery tokens read from forms.</summary>
internal static partial class StaffPages
{
    /// <summary>A client signed in on the sign-in page as a new staff member of the role.</summary>
    public static Task<HttpClient> SignedInClientAsync(TestApp app, string role) => StaffCookieClient.SignedInAsync(app, role);

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
