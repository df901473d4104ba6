using System.Net;
using System.Text.Json.Nodes;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using PanelRound.Core.Statistics;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Tests.Infrastructure;

namespace PanelRound.Web.Tests.Panels;

/// <summary>
/// The whole story through the API: a panel with 3 questions x 5 periods and 8 experts, two
/// rounds with revisions, frozen feedback checked against the statistics core on the same
/// answers, conclusion and consensus.
/// </summary>
public abstract class PanelStoryTests(IDatabaseFixture fixture) : ProviderTests(fixture)
{
    private static readonly string[] Years = ["2027", "2028", "2029", "2030", "2031"];

    internal sealed record Setup(TestApp App, HttpClient Staff, int PanelId, int[] QuestionIds, List<(int MembershipId, string Token, string Code)> Members);

    internal async Task<Setup> SetUpPanelAsync(int experts = 8)
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var price = (int)(await staff.PostOk("/api/indicators", new { key = "price-a", name = "Apartment price, district A", unitLabel = "EUR/m²", decimals = 0 }))["id"]!;
        var rent = (int)(await staff.PostOk("/api/indicators", new { key = "rent-a", name = "Prime office rent", unitLabel = "EUR/m²/month", decimals = 2 }))["id"]!;
        var yield = (int)(await staff.PostOk("/api/indicators", new { key = "yield-a", name = "Prime office yield", unitLabel = "%", decimals = 2 }))["id"]!;
        await staff.PostOk($"/api/indicators/{price}/observations",
            Enumerable.Range(2016, 10).Select(y => new { period = y.ToString(), value = 3000 + 100 * (y - 2016), source = "test series" }).ToArray(), HttpStatusCode.OK);
        var panel = await staff.PostOk("/api/panels", new
        {
            title = "Outlook 2027-2031", brief = "**Answer** every year.", startsOn = "2026-11-02", targetPeriods = "2027-2031",
            settings = new { outlierRule = "TukeyFences", trimFraction = 0.1, minimumGroupSize = 3, outliersMustJustify = false },
        });
        var panelId = (int)panel["id"]!;
        var q1 = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = price, label = "Price per m²", format = "Point", hardMin = 500, hardMax = 20000, plausibleMin = 2000, plausibleMax = 8000 }))["id"]!;
        var q2 = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = rent, label = "Prime rent", format = "Range", hardMin = 1, hardMax = 100 }))["id"]!;
        var q3 = (int)(await staff.PostOk($"/api/panels/{panelId}/questions", new { indicatorId = yield, label = "Prime yield", format = "Point", hardMin = 0.5, hardMax = 15 }))["id"]!;
        var members = new List<(int, string, string)>();
        for (var i = 0; i < experts; i++)
        {
            var e = await staff.PostOk("/api/experts", new { name = $"Expert {i}", email = $"expert{i}@panel.example", affiliation = "Test" });
            var link = await staff.PostOk($"/api/panels/{panelId}/members", new { expertId = (int)e["id"]!, sendInvitation = i == 0 });
            members.Add(((int)link["membershipId"]!, (string)link["token"]!, (string)link["panelCode"]!));
        }
        return new Setup(app, staff, panelId, [q1, q2, q3], members);
    }

    internal static double PriceAnswer(int expert, int year, int round) => 4000 + 37 * expert + 55 * year + (round - 1) * (expert % 3 == 0 ? -20 : 15) + (expert == 7 ? 2500 : 0);

    internal static (double P10, double P50, double P90) RentAnswer(int expert, int year, int round)
    {
        var mid = 25 + 0.4 * expert + 0.3 * year - (round - 1) * 0.1 * (expert - 4);
        return (Math.Round(mid - 2 - 0.1 * expert, 2), Math.Round(mid, 2), Math.Round(mid + 2.5 + 0.05 * expert, 2));
    }

    internal static double YieldAnswer(int expert, int year, int round) => Math.Round(4.5 + 0.05 * expert - 0.02 * year + (round - 1) * 0.01, 3);

    internal static object Submission(int[] q, int expert, int round, bool draft = false) => new
    {
        draft,
        answers = new object[]
        {
            new { questionId = q[0], confidence = 1 + expert % 5, rationale = $"Supply view {expert}", periods = Years.Select((y, j) => new { period = y, value = PriceAnswer(expert, j, round) }).ToArray() },
            new { questionId = q[1], confidence = 3, rationale = (string?)null, periods = Years.Select((y, j) => { var r = RentAnswer(expert, j, round); return new { period = y, p10 = r.P10, p50 = r.P50, p90 = r.P90 }; }).ToArray() },
            new { questionId = q[2], confidence = 4, rationale = "Rates", periods = Years.Select((y, j) => new { period = y, value = YieldAnswer(expert, j, round) }).ToArray() },
        },
    };

    [SkippableFact]
    public async Task FullStory_TwoRoundsWithRevisions_FeedbackAndConsensusEqualTheStatisticsCore()
    {
        var s = await SetUpPanelAsync();
        var (app, staff, panelId, q, members) = (s.App, s.Staff, s.PanelId, s.QuestionIds, s.Members);
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });

        // Round 1: every expert submits; expert 2 first saves a draft, expert 5 revises (the latest counts).
        var expertClient = app.Client();
        for (var i = 0; i < members.Count; i++)
        {
            expertClient.WithExpertToken(members[i].Token);
            if (i == 2)
            {
                await expertClient.PostOk($"/api/expert/panels/{panelId}/estimates", Submission(q, 99, 1, draft: true), HttpStatusCode.OK);
            }
            // Expert 5 first submits someone else's values, then revises to their own.
            await expertClient.PostOk($"/api/expert/panels/{panelId}/estimates", Submission(q, i == 5 ? 42 : i, 1), HttpStatusCode.OK);
            if (i == 5)
            {
                await expertClient.PostOk($"/api/expert/panels/{panelId}/estimates", Submission(q, i, 1), HttpStatusCode.OK);
            }
        }
        var tracker = await staff.GetOk($"/api/panels/{panelId}/rounds/1/tracker");
        Assert.Equal(8, (int)tracker["responded"]!);
        await staff.PostOk($"/api/panels/{panelId}/rounds/1/close", new { }, HttpStatusCode.OK);

        // Closed round refuses submissions with 409.
        var (status, problem) = await expertClient.WithExpertToken(members[0].Token).Post($"/api/expert/panels/{panelId}/estimates", Submission(q, 0, 1));
        Assert.Equal(HttpStatusCode.Conflict, status);
        Assert.Contains("closed", (string)problem!["detail"]!, StringComparison.OrdinalIgnoreCase);

        // Round 2 opens; the expert sees round 1's frozen feedback, equal to the core's on the same answers.
        await staff.PostOk($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        var formJson = await expertClient.WithExpertToken(members[3].Token).GetTextOk($"/api/expert/panels/{panelId}");
        var form = Api.Read<ExpertForm>(formJson);
        Assert.Equal(1, form.FeedbackRound);
        var settings = new FeedbackSettings { Rule = OutlierRule.TukeyFences, TrimFraction = 0.1, MinimumGroupSize = 3 };
        var questions = form.Questions;
        for (var j = 0; j < Years.Length; j++)
        {
            var expected = RoundFeedback.ForPoint(Enumerable.Range(0, 8).Select(e => PriceAnswer(e, j, 1)).ToList(), settings).GetFeedbackOrThrow();
            var shown = questions[0].Periods[j].Feedback!.Stats!;
            var spread = shown.Spread!;
            Assert.Equal(expected.Median, shown.Median, 9);
            Assert.Equal(expected.Q1, spread.Q1, 9);
            Assert.Equal(expected.Q3, spread.Q3, 9);
            Assert.Equal(8, spread.Histogram.Counts.Sum());
            Assert.All(spread.Histogram.Counts, c => Assert.True(c == 0 || c >= 3));

            var ranges = Enumerable.Range(0, 8).Select(e => RentAnswer(e, j, 1)).Select(r => new RangeAnswer(r.P10, r.P50, r.P90)).ToList();
            var expectedRange = RoundFeedback.ForRange(ranges, settings).GetFeedbackOrThrow();
            var shownRange = questions[1].Periods[j].Feedback!.Stats!;
            Assert.Equal(Quantiles.Median(ranges.Select(r => r.P10).ToList()), shownRange.Spread!.BandP10!.Value, 9);
            Assert.Equal(Quantiles.Median(ranges.Select(r => r.P90).ToList()), shownRange.Spread!.BandP90!.Value, 9);
            Assert.Equal(expectedRange.P50.Median, shownRange.Median, 9);
        }
        // Experts see no mean, no trimmed median and no extreme (the anonymity defect): no such field anywhere in the response.
        Assert.DoesNotContain("\"trimmedMedian\"", formJson, StringComparison.Ordinal);
        Assert.DoesNotContain("\"trimmedMean\"", formJson, StringComparison.Ordinal);
        Assert.DoesNotContain("\"retainedMax\"", formJson, StringComparison.Ordinal);
        // The expert's own previous answer is shown; the group's rationales are unattributed text only.
        Assert.Equal(PriceAnswer(3, 0, 1), questions[0].Periods[0].Previous!.Value);
        Assert.Equal(8, questions[0].Rationales.Count);
        foreach (var other in members.Where((_, i) => i != 3))
        {
            Assert.DoesNotContain(other.Code, formJson, StringComparison.Ordinal);
        }
        for (var i = 0; i < 8; i++)
        {
            Assert.DoesNotContain($"expert{i}@panel.example", formJson, StringComparison.Ordinal);
            Assert.DoesNotContain($"Expert {i}", formJson, StringComparison.Ordinal);
        }
        // No extreme individual answer is shown: no min or max, and the outlier (expert 7) is only counted in an open-ended bin.
        Assert.DoesNotContain("\"min\"", formJson, StringComparison.Ordinal);
        Assert.DoesNotContain("\"max\"", formJson, StringComparison.Ordinal);
        Assert.DoesNotContain(PriceAnswer(7, 0, 1).ToString(System.Globalization.CultureInfo.InvariantCulture), formJson, StringComparison.Ordinal);
        Assert.True(questions[0].Periods[0].Feedback!.Stats!.Spread!.Histogram.Counts[^1] >= 2);

        // Round 2: six experts revise, two hold by not answering again; expert 1 revises twice.
        for (var i = 0; i < 6; i++)
        {
            expertClient.WithExpertToken(members[i].Token);
            await expertClient.PostOk($"/api/expert/panels/{panelId}/estimates", Submission(q, i, 2), HttpStatusCode.OK);
            if (i == 1)
            {
                await expertClient.PostOk($"/api/expert/panels/{panelId}/estimates", Submission(q, i, 2), HttpStatusCode.OK);
            }
        }
        await staff.PostOk($"/api/panels/{panelId}/rounds/2/close", new { }, HttpStatusCode.OK);
        var frozen2 = await staff.GetAs<List<FeedbackView>>($"/api/panels/{panelId}/rounds/2/feedback");
        var price2027 = frozen2.Single(f => f.QuestionId == q[0] && f.Period == "2027");
        Assert.Equal(6, price2027.N);
        var expected2 = RoundFeedback.ForPoint(Enumerable.Range(0, 6).Select(e => PriceAnswer(e, 0, 2)).ToList(), settings).GetFeedbackOrThrow();
        Assert.Equal(expected2.Median, price2027.Point!.Median, 9);

        // Results: convergence and stability between rounds, over the experts who answered both.
        var results = await staff.GetAs<PanelResultsView>($"/api/panels/{panelId}/results");
        var r2 = results.Questions[0].Periods[0].Rounds[1];
        Assert.Equal(6, r2.Stability!.PairedCount);
        var pairs = Enumerable.Range(0, 6).Select(e => new PairedAnswer(PriceAnswer(e, 0, 1), PriceAnswer(e, 0, 2))).ToList();
        Assert.Equal(Stability.Assess(pairs, 0.15).Wilcoxon!.PValue, r2.Stability.Wilcoxon!.PValue, 9);
        var r1 = results.Questions[0].Periods[0].Rounds[0];
        Assert.Equal([members[7].Code], r1.OutlierCodes);

        // Conclude: the consensus is the core's on round 2's answers; the panel is read-only.
        var consensus = await staff.PostAs<List<ConsensusEntryDto>>($"/api/panels/{panelId}/conclude", new { }, HttpStatusCode.OK);
        Assert.Equal(15, consensus.Count);
        var c2027 = consensus.Single(c => c.QuestionId == q[0] && c.Period == "2027");
        var expectedConsensus = Consensus.ForPoint(Enumerable.Range(0, 6).Select(e => PriceAnswer(e, 0, 2)).ToList(), settings);
        Assert.Equal(expectedConsensus.Value, c2027.Value, 9);
        Assert.Equal(expectedConsensus.Low, c2027.Low, 9);
        Assert.Equal(expectedConsensus.High, c2027.High, 9);
        var rent2031 = consensus.Single(c => c.QuestionId == q[1] && c.Period == "2031");
        var expectedRent = Consensus.ForRange(Enumerable.Range(0, 6).Select(e => RentAnswer(e, 4, 2)).Select(r => new RangeAnswer(r.P10, r.P50, r.P90)).ToList(), settings);
        Assert.Equal(expectedRent.Value, rent2031.Value, 9);
        Assert.Equal(expectedRent.Low, rent2031.Low, 9);
        Assert.Equal(expectedRent.High, rent2031.High, 9);
        var (afterStatus, _) = await staff.Post($"/api/panels/{panelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(7) });
        Assert.Equal(HttpStatusCode.Conflict, afterStatus);

        // Nothing lost: every submission is its own row, and the audit log has every state change.
        var (estimates, actions) = await app.WithDbAsync(async db => (await db.Estimates.CountAsync(),
            await db.AuditEvents.Where(e => e.PanelId == panelId).Select(e => e.Action).ToListAsync()));
        Assert.Equal((8 + 2 + 7) * 15, estimates);
        foreach (var a in new[] { "panel.created", "question.added", "link.issued", "round.opened", "round.closed", "consensus.published" })
        {
            Assert.Contains(a, actions);
        }
    }

    [SkippableFact]
    public async Task ExpertToken_OtherPanelOtherMembershipOrRevoked_IsRefused()
    {
        var s = await SetUpPanelAsync(experts: 3);
        var other = await s.Staff.PostOk("/api/panels", new { title = "Other", startsOn = "2026-11-02", targetPeriods = "2027" });
        var otherId = (int)other["id"]!;
        var client = s.App.Client().WithExpertToken(s.Members[0].Token);

        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync($"/api/expert/memberships/{s.Members[0].MembershipId}")).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/expert/panels/{otherId}")).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/expert/memberships/{s.Members[1].MembershipId}")).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await client.Post($"/api/expert/panels/{otherId}/estimates", new { draft = true, answers = Array.Empty<object>() })).Status);
        Assert.Equal(HttpStatusCode.NotFound, (await s.App.Client().WithExpertToken("not-a-token").GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
        // No token and no link cookie: the caller is anonymous.
        Assert.Equal(HttpStatusCode.Unauthorized, (await s.App.Client().GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
        // An expert token is not a staff credential.
        Assert.Equal(HttpStatusCode.Unauthorized, (await s.App.Client(s.Members[0].Token).GetAsync($"/api/panels/{s.PanelId}")).StatusCode);

        await s.Staff.PostOk($"/api/panels/{s.PanelId}/members/{s.Members[0].MembershipId}/revoke", new { }, HttpStatusCode.OK);
        Assert.Equal(HttpStatusCode.NotFound, (await client.GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);

        // A re-issued link replaces the old one.
        var reissued = await s.Staff.PostOk($"/api/panels/{s.PanelId}/members/{s.Members[1].MembershipId}/reissue", new { sendInvitation = false }, HttpStatusCode.OK);
        Assert.Equal(HttpStatusCode.NotFound, (await s.App.Client().WithExpertToken(s.Members[1].Token).GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await s.App.Client().WithExpertToken((string)reissued["token"]!).GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
        var actions = await s.App.WithDbAsync(db => db.AuditEvents.Select(e => e.Action).ToListAsync());
        Assert.Contains("link.revoked", actions);
        Assert.Contains("link.reissued", actions);
    }

    [SkippableFact]
    public async Task Submission_BadValues_FieldErrorsAndNothingSaved()
    {
        var s = await SetUpPanelAsync(experts: 3);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var client = s.App.Client().WithExpertToken(s.Members[0].Token);
        var q = s.QuestionIds;
        var bad = new
        {
            draft = false,
            answers = new object[]
            {
                new { questionId = q[0], confidence = 9, rationale = "x", periods = new object[] { new { period = "2027", value = 25000 }, new { period = "2028", value = 4000 } } },
                new { questionId = q[1], confidence = 3, rationale = "x", periods = Years.Select(y => new { period = y, p10 = 30.0, p50 = 28.0, p90 = 35.0 }).ToArray() },
            },
        };
        var (status, body) = await client.Post($"/api/expert/panels/{s.PanelId}/estimates", bad);
        Assert.Equal(HttpStatusCode.BadRequest, status);
        var errors = body!["errors"]!.AsObject();
        Assert.Contains("above the highest allowed value", (string)errors["answers[0].periods[0].value"]![0]!, StringComparison.Ordinal);
        Assert.True(errors.ContainsKey("answers[0].confidence"));
        Assert.True(errors.ContainsKey("answers[0].periods"), "missing periods 2029-2031 are reported");
        Assert.Contains("P10", (string)errors["answers[1].periods[0].p10"]![0]!, StringComparison.Ordinal);
        Assert.Contains(errors["answers"]!.AsArray(), e => ((string)e!).Contains("Prime yield", StringComparison.Ordinal));
        Assert.Equal(0, await s.App.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task OutliersMustJustify_AnswerOutsideRetainedRange_NeedsARationale()
    {
        // The rule applies where experts were shown the group's quartiles: from 8 answers (AnonymousFeedback.MinimumForSpread).
        var s = await SetUpPanelAsync(experts: 8);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var client = s.App.Client();
        for (var i = 0; i < 8; i++)
        {
            await client.WithExpertToken(s.Members[i].Token).PostOk($"/api/expert/panels/{s.PanelId}/estimates", Submission(s.QuestionIds, i, 1), HttpStatusCode.OK);
        }
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await s.App.WithDbAsync(async db =>
        {
            var p = await db.Panels.SingleAsync(x => x.Id == s.PanelId);
            p.Settings.OutliersMustJustify = true;
            await db.SaveChangesAsync();
        });
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var far = Submission(s.QuestionIds, 0, 2);
        var json = JsonNode.Parse(System.Text.Json.JsonSerializer.Serialize(far, Api.Json))!;
        json["answers"]![0]!["periods"]![0]!["value"] = 9000;
        json["answers"]![0]!["rationale"] = null;
        var (status, body) = await client.WithExpertToken(s.Members[0].Token).Post($"/api/expert/panels/{s.PanelId}/estimates", json);
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.Contains("rationale", (string)body!["errors"]!["answers[0].rationale"]![0]!, StringComparison.Ordinal);
        json["answers"]![0]!["rationale"] = "A new tower will anchor the district.";
        var (ok, receipt) = await client.Post($"/api/expert/panels/{s.PanelId}/estimates", json);
        Assert.Equal(HttpStatusCode.OK, ok);
        Assert.NotEmpty(receipt!["warnings"]!.AsArray()); // 9000 is outside the plausible range: "are you sure?"
    }

    [SkippableFact]
    public async Task Api_ErrorsAreProblemDetails_AuditIsForAdministrators_OpenApiIsPublished()
    {
        var app = await StartAsync();
        var staff = await app.StaffClientAsync();
        var (status, body) = await staff.Post("/api/panels", new { brief = "x", targetPeriods = "2031-2027" });
        Assert.Equal(HttpStatusCode.BadRequest, status);
        var errors = body!["errors"]!.AsObject();
        Assert.True(errors.ContainsKey("title"));
        Assert.True(errors.ContainsKey("startsOn"));
        Assert.True(errors.ContainsKey("targetPeriods"));
        var missing = await staff.GetAsync("/api/panels/999999");
        Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
        Assert.Equal("application/problem+json", missing.Content.Headers.ContentType?.MediaType);
        Assert.Equal(0, await app.WithDbAsync(db => db.Panels.CountAsync()));

        Assert.Equal(HttpStatusCode.Forbidden, (await staff.GetAsync("/api/audit")).StatusCode);
        var admin = await app.StaffClientAsync(PanelRound.Data.Entities.Roles.Administrator);
        await staff.PostOk("/api/panels", new { title = "Audited", startsOn = "2026-11-02", targetPeriods = "2027-2028" });
        var audit = (await admin.GetOk("/api/audit?action=panel.created")).AsArray();
        Assert.Single(audit);

        var openApi = await app.Client().GetStringAsync("/openapi/v1.json");
        Assert.Contains("/api/panels/{id}/rounds/{number}/close", openApi, StringComparison.Ordinal);
        Assert.Contains("/api/expert/panels/{panelId}/estimates", openApi, StringComparison.Ordinal);
    }

    [SkippableFact]
    public async Task AddMember_WithoutSmtp_InvitationWithTheLinkGoesToTheOutbox()
    {
        var app = await StartAsync();
        var outbox = app.OutboxFolder;
        var staff = await app.StaffClientAsync();
        var panel = await staff.PostOk("/api/panels", new { title = "Mail test", startsOn = "2026-11-02", targetPeriods = "2027" });
        var expert = await staff.PostOk("/api/experts", new { name = "Mara Quill", email = "mara@panel.example" });
        var link = await staff.PostOk($"/api/panels/{(int)panel["id"]!}/members", new { expertId = (int)expert["id"]! });
        var mail = Assert.Single(Directory.GetFiles(outbox, "*.eml"));
        var text = await File.ReadAllTextAsync(mail);
        Assert.Contains("mara@panel.example", text, StringComparison.Ordinal);
        Assert.Contains((string)link["token"]!, text, StringComparison.Ordinal);
        var stored = await app.WithDbAsync(db => db.Memberships.SingleAsync());
        Assert.Equal(64, stored.TokenHash.Length);
        Assert.NotEqual((string)link["token"]!, stored.TokenHash);
        Directory.Delete(outbox, recursive: true);
    }

    [SkippableFact]
    public async Task LinkCookie_RevokedOrReissued_StopsWorking_AndCookieApiWritesNeedTheGuardHeader()
    {
        var s = await SetUpPanelAsync(experts: 3);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var browser = s.App.Client();
        var exchange = await browser.GetAsync($"/e/{s.Members[0].Token}");
        Assert.Equal(HttpStatusCode.Redirect, exchange.StatusCode);
        Assert.Equal("/expert", exchange.Headers.Location?.OriginalString);
        Assert.Equal(HttpStatusCode.OK, (await browser.GetAsync("/expert")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await browser.GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);

        // A cookie-borne API write without the guard header is refused (cross-site forgery); with it, it passes.
        var body = Submission(s.QuestionIds, 0, 1);
        Assert.Equal(HttpStatusCode.BadRequest, (await browser.Post($"/api/expert/panels/{s.PanelId}/estimates", body)).Status);
        browser.DefaultRequestHeaders.Add("X-Requested-With", "fetch");
        Assert.Equal(HttpStatusCode.OK, (await browser.Post($"/api/expert/panels/{s.PanelId}/estimates", body)).Status);

        await s.Staff.PostOk($"/api/panels/{s.PanelId}/members/{s.Members[0].MembershipId}/reissue", new { sendInvitation = false }, HttpStatusCode.OK);
        var after = await browser.GetAsync("/expert");
        Assert.Equal(HttpStatusCode.Redirect, after.StatusCode);
        Assert.Contains("link-needed", after.Headers.Location?.OriginalString, StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.NotFound, (await browser.GetAsync($"/api/expert/panels/{s.PanelId}")).StatusCode);
    }

    [SkippableFact]
    public async Task Submission_NullElementsOrTooManyPeriods_AreFieldErrorsNot500()
    {
        var s = await SetUpPanelAsync(experts: 3);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        var client = s.App.Client().WithExpertToken(s.Members[0].Token);
        var (status, body) = await client.Post($"/api/expert/panels/{s.PanelId}/estimates", new { draft = true, answers = new object?[] { null } });
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.True(body!["errors"]!.AsObject().ContainsKey("answers[0]"));
        var tooMany = new { draft = true, answers = new[] { new { questionId = s.QuestionIds[0], periods = Enumerable.Range(0, 9).Select(i => new { period = "2027", value = 4000 }).ToArray() } } };
        (status, body) = await client.Post($"/api/expert/panels/{s.PanelId}/estimates", tooMany);
        Assert.Equal(HttpStatusCode.BadRequest, status);
        Assert.True(body!["errors"]!.AsObject().ContainsKey("answers[0].periods"));
        var (panelStatus, panelBody) = await s.Staff.Post("/api/panels", new { title = "Long", startsOn = "2026-01-01", targetPeriods = "2027-2077" });
        Assert.Equal(HttpStatusCode.BadRequest, panelStatus);
        Assert.True(panelBody!["errors"]!.AsObject().ContainsKey("targetPeriods"));
        Assert.Equal(0, await s.App.WithDbAsync(db => db.Estimates.CountAsync()));
    }

    [SkippableFact]
    public async Task Revoke_AfterTheRoundClosed_KeepsThatRoundsAnswers_ButNotTheOpenRounds()
    {
        var s = await SetUpPanelAsync(experts: 4);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        for (var i = 0; i < 4; i++)
        {
            await s.App.Client().WithExpertToken(s.Members[i].Token).PostOk($"/api/expert/panels/{s.PanelId}/estimates", Submission(s.QuestionIds, i, 1), HttpStatusCode.OK);
        }
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds/1/close", new { }, HttpStatusCode.OK);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddDays(3) });
        for (var i = 0; i < 4; i++)
        {
            await s.App.Client().WithExpertToken(s.Members[i].Token).PostOk($"/api/expert/panels/{s.PanelId}/estimates", Submission(s.QuestionIds, i, 2), HttpStatusCode.OK);
        }
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/members/{s.Members[3].MembershipId}/revoke", new { }, HttpStatusCode.OK);
        var results = await s.Staff.GetAs<PanelResultsView>($"/api/panels/{s.PanelId}/results");
        var rounds = results.Questions[0].Periods[0].Rounds;
        Assert.Equal(4, rounds[0].Feedback.N);
        Assert.Equal(3, rounds[1].Feedback.N);
    }

    [SkippableFact]
    public async Task Deadline_Passed_TheDeadlineServiceClosesAndFreezesTheRound()
    {
        var s = await SetUpPanelAsync(experts: 3);
        await s.Staff.PostOk($"/api/panels/{s.PanelId}/rounds", new { closesAt = DateTime.UtcNow.AddMinutes(10) });
        for (var i = 0; i < 3; i++)
        {
            await s.App.Client().WithExpertToken(s.Members[i].Token).PostOk($"/api/expert/panels/{s.PanelId}/estimates", Submission(s.QuestionIds, i, 1), HttpStatusCode.OK);
        }
        s.App.Clock!.Advance(TimeSpan.FromMinutes(11));
        var service = s.App.Services.GetRequiredService<PanelRound.Web.Features.Rounds.RoundDeadlineService>();
        Assert.Equal(1, await service.CloseDueRoundsAsync());
        var feedback = await s.Staff.GetAs<List<FeedbackView>>($"/api/panels/{s.PanelId}/rounds/1/feedback");
        Assert.Equal(15, feedback.Count);
        Assert.All(feedback, f => Assert.Equal(3, f.N));
    }
}

[Collection(SqliteCollection.Name)]
public sealed class SqlitePanelStoryTests(SqliteFixture fixture) : PanelStoryTests(fixture);

[Collection(PostgresCollection.Name)]
public sealed class PostgresPanelStoryTests(PostgresFixture fixture) : PanelStoryTests(fixture);
