using System.Net;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Defects;

/// <summary>A panel set up through the public API: one Point question without hard bounds and one Range question, n experts, round 1 open.</summary>
internal sealed record SmallPanel(HttpClient Staff, int PanelId, int PointQuestion, int RangeQuestion, string[] Periods, List<(int MembershipId, string Token, string Code)> Members)
{
    public static async Task<SmallPanel> CreateAsync(TestApp app, int experts, string periods = "2027-2028", int minimumGroupSize = 3, bool open = true)
    {
        var staff = await app.StaffClientAsync();
        var key = "ind-" + Guid.NewGuid().ToString("N")[..8];
        var indicator = (int)(await staff.PostOk("/api/indicators", new { key, name = "Test price", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        var panel = await staff.PostOk("/api/panels", new
        {
            title = "Defect panel", brief = "Answer.", startsOn = "2026-11-02", targetPeriods = periods,
            settings = new { outlierRule = "TukeyFences", trimFraction = 0.1, minimumGroupSize, outliersMustJustify = false },
        });
        var panelId = (int)panel["id"]!;
        var point = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "Price", format = "Point" }))["id"]!;
        var range = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = indicator, label = "Rent band", format = "Range" }))["id"]!;
        var members = new List<(int, string, string)>();
        for (var i = 0; i < experts; i++)
        {
            var e = await staff.PostOk("/api/experts", new { name = $"Expert {i} {key}", email = $"e{i}.{key}@panel.example" });
            var link = await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = (int)e["id"]!, sendInvitation = false });
            members.Add(((int)link["membershipId"]!, (string)link["token"]!, (string)link["panelCode"]!));
        }
        if (open)
        {
            await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        }
        var years = periods.Split('-');
        var list = Enumerable.Range(int.Parse(years[0]), int.Parse(years[^1]) - int.Parse(years[0]) + 1).Select(y => y.ToString()).ToArray();
        return new SmallPanel(staff, panelId, point, range, list, members);
    }

    /// <summary>A full submission: the same point value for every period, and a range around it.</summary>
    public object Submission(double value, string? rationale = null) => new
    {
        draft = false,
        answers = new object[]
        {
            new { questionId = PointQuestion, rationale, periods = Periods.Select(p => new { period = p, value }).ToArray() },
            new { questionId = RangeQuestion, periods = Periods.Select(p => new { period = p, p10 = value - 1, p50 = value, p90 = value + 1 }).ToArray() },
        },
    };

    public async Task SubmitAsync(HttpClient expert, int member, double value) =>
        await expert.WithExpertToken(Members[member].Token).PostOk($"/api/expert/panels/{PanelId}/estimates", Submission(value), HttpStatusCode.OK);
}
