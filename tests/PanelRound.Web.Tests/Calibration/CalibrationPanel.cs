using System.Net;
using System.Net.Http.Json;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Calibration;

/// <summary>
/// A panel set up through the public API with a Point question and a Range question about 2027-2028
/// and calibration questions (Range, 2026Q3), four experts, round 1 open. Expert i answers every
/// calibration question with <see cref="CalibrationAnswer"/>: with truth 100, expert 0's band lies
/// above the truth (bin 0), expert 1's median below it (bin 2), expert 2's median above it (bin 1)
/// and expert 3's band below it (bin 3).
/// </summary>
internal sealed record CalibrationPanel(
    TestApp App, HttpClient Staff, int PanelId, int PointQuestion, int RangeQuestion, int[] CalibrationQuestions,
    List<(int MembershipId, string Token, string Code)> Members)
{
    public const string CalibrationPeriod = "2026Q3";

    public static readonly (double P10, double P50, double P90)[] CalibrationAnswers = [(101, 102, 103), (95, 99, 105), (90, 101, 110), (97, 98, 99)];

    public static (double P10, double P50, double P90) CalibrationAnswer(int expert) => CalibrationAnswers[expert];

    public static async Task<CalibrationPanel> CreateAsync(TestApp app, int calibrationQuestions = 3, string? weighting = null)
    {
        var staff = await app.StaffClientAsync();
        var price = (int)(await staff.PostOk("/api/indicators", new { key = "cal-price", name = "Apartment price", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        var rent = (int)(await staff.PostOk("/api/indicators", new { key = "cal-rent", name = "Office rent", unitLabel = "EUR/m²/month", decimals = 2 }))["id"]!;
        var volume = (int)(await staff.PostOk("/api/indicators", new { key = "cal-volume", name = "Transaction volume", unitLabel = "EUR m", decimals = 1 }))["id"]!;
        var panel = await staff.PostOk("/api/panels", new
        {
            title = "Harbour outlook", brief = "Answer every question.", startsOn = "2026-11-02", targetPeriods = "2027-2028",
            settings = new { minimumGroupSize = 3, outliersMustJustify = false, weighting },
        });
        var panelId = (int)panel["id"]!;
        var point = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = price, label = "Price per m²", format = "Point" }))["id"]!;
        var range = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = rent, label = "Prime rent", format = "Range" }))["id"]!;
        var calibration = new int[calibrationQuestions];
        for (var i = 0; i < calibrationQuestions; i++)
        {
            calibration[i] = (int)(await staff.PostOk($"/api/panels/{panelId}/questions",
                new { indicatorId = volume, label = $"Volume, segment {i + 1}", format = "Range", targetPeriods = CalibrationPeriod, calibration = true }))["id"]!;
        }
        var members = new List<(int, string, string)>();
        for (var i = 0; i < 4; i++)
        {
            var e = await staff.PostOk("/api/experts", new { name = $"Harbour expert {i}", email = $"cal{i}@panel.example" });
            var link = await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = (int)e["id"]!, sendInvitation = false });
            members.Add(((int)link["membershipId"]!, (string)link["token"]!, (string)link["panelCode"]!));
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        return new CalibrationPanel(app, staff, panelId, point, range, calibration, members);
    }

    /// <summary>Every expert answers every question; the real questions' answers spread with the expert's index.</summary>
    public async Task AnswerAllAsync()
    {
        for (var i = 0; i < Members.Count; i++)
        {
            var (p10, p50, p90) = CalibrationAnswer(i);
            var answers = new List<object>
            {
                new { questionId = PointQuestion, periods = new[] { "2027", "2028" }.Select(p => new { period = p, value = 3000 + (100 * i) }).ToArray() },
                new { questionId = RangeQuestion, periods = new[] { "2027", "2028" }.Select(p => new { period = p, p10 = 20 + i, p50 = 25 + i, p90 = 30 + (2 * i) }).ToArray() },
            };
            answers.AddRange(CalibrationQuestions.Select(q => new { questionId = q, periods = new[] { new { period = CalibrationPeriod, p10, p50, p90 } } }));
            using var expert = App.Client();
            await expert.WithExpertToken(Members[i].Token).PostOk($"/api/expert/panels/{PanelId}/estimates", new { draft = false, answers }, HttpStatusCode.OK);
        }
    }

    public async Task CloseRoundAsync() => await Staff.PostOk($"/api/panels/{PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);

    public async Task<HttpResponseMessage> PutTrueValueAsync(int questionId, object body) =>
        await Staff.PutAsJsonAsync($"/api/panels/{PanelId}/questions/{questionId}/true-value", body, Api.Json);

    public async Task RecordTruthsAsync(double truth = 100)
    {
        foreach (var q in CalibrationQuestions)
        {
            var r = await PutTrueValueAsync(q, new { value = truth });
            Assert.True(r.IsSuccessStatusCode, await r.Content.ReadAsStringAsync());
        }
    }
}
