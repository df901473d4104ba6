using System.Text.Json;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Core.Domain;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Roster;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Panels;

/// <summary>The facilitator's panel page: questions and their relations, roster and links, rounds with the response tracker, conclusion.</summary>
[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class DetailsModel(
    PanelRoundDbContext db, PanelSetup setup, Memberships memberships, RoundLifecycle rounds, PanelConclusion conclusion, CalibrationTruths truths,
    PanelRelations relations, PanelResults results) : PageModel
{
    /// <summary>A personal link issued on this visit: whose it is and the link itself (a secret: never in a URL, never logged).</summary>
    public sealed record IssuedLinkView(int PanelId, string Name, string PanelCode, string Link);

    private const string LinksKey = "issued-links";

    private const string ReturningKey = "returning";
    /// <summary>One term of the relation form as typed; the unit factor is read by <see cref="Numbers.TryParseEntry"/> with a decimal point.</summary>
    public sealed class RelationTermForm
    {
        public int? QuestionId { get; set; }

        public string? Label { get; set; }

        public string? Unit { get; set; }

        public string? Factor { get; set; }
    }

    /// <summary>The relation form: the identity's shape and its three terms (names as in the API's <see cref="RelationInput"/>).</summary>
    public sealed class RelationForm
    {
        public string? Shape { get; set; }

        public RelationTermForm Result { get; set; } = new();

        public RelationTermForm First { get; set; } = new();

        public RelationTermForm Second { get; set; } = new();
    }

    [BindProperty]
    public RelationForm Relation { get; set; } = new();

    /// <summary>The panel's declared relations.</summary>
    public IReadOnlyList<QuestionRelation> Relations { get; private set; } = [];

    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    public Panel Panel { get; private set; } = null!;

    public IReadOnlyList<Expert> Roster { get; private set; } = [];

    public IReadOnlyDictionary<int, bool> Responded { get; private set; } = new Dictionary<int, bool>();

    public string BriefHtml { get; private set; } = "";

    /// <summary>What the last action did, shown once after its redirect (<c>role="status"</c>).</summary>
    [TempData(Key = "flash")]
    public string? Flash { get; set; }

    /// <summary>
    /// The personal links issued on this visit, newest first. They are carried across each of the page's own
    /// redirects in TempData (an encrypted cookie, never the URL) and dropped when the page is opened afresh.
    /// </summary>
    public IReadOnlyList<IssuedLinkView> IssuedLinks { get; private set; } = [];

    /// <summary><c>?review=conclude</c> shows what concluding would publish, with the box to tick.</summary>
    [BindProperty(SupportsGet = true, Name = "review")]
    public string? Review { get; set; }

    /// <summary>The box "I have read this summary" of the conclusion review; concluding needs it.</summary>
    [BindProperty]
    public bool ConfirmConclusion { get; set; }

    /// <summary>What concluding would publish; set when the review is shown.</summary>
    public ConclusionReview? Conclusion { get; private set; }

    /// <summary>Members whose link works (not revoked): a round needs at least one.</summary>
    public int ActiveMembers => Panel.Memberships.Count(m => m.State != MembershipState.Revoked);

    /// <summary>Whom experts are told to contact.</summary>
    public MailContact Contact { get; private set; } = new(null, null);

    public bool CanConclude => Panel.State != PanelState.Concluded && OpenRound is null && Panel.Rounds.Any(r => r.State == RoundState.Closed);

    [BindProperty]
    public DateTime? ClosesAt { get; set; }

    /// <summary>The latest failed deadline close of the open round, shown until the round closes.</summary>
    public (DateTime At, RoundDeadlineService.CloseFailure Failure)? CloseFailure { get; private set; }

    public Round? OpenRound => Panel.Rounds.FirstOrDefault(r => r.State == RoundState.Open);

    public async Task<IActionResult> OnGetAsync()
    {
        // Links issued on this visit stay listed only while the page follows its own actions.
        var returning = TempData[ReturningKey] is true;
        return await LoadAsync(keepLinks: returning);
    }

    private async Task<IActionResult> LoadAsync(bool keepLinks = true)
    {
        IssuedLinks = keepLinks ? PeekLinks() : [];
        if (!keepLinks)
        {
            TempData.Remove(LinksKey);
        }
        if (IssuedLinks.Count > 0)
        {
            // The page holds secrets: no cache may keep it.
            Response.Headers.CacheControl = "no-store";
        }
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator)
            .Include(p => p.Rounds).Include(p => p.Memberships).ThenInclude(m => m.Expert).FirstOrDefaultAsync(p => p.Id == Id);
        if (panel is null)
        {
            return NotFound();
        }
        Panel = panel;
        Relations = await relations.ListAsync(panel.Id) ?? [];
        BriefHtml = Markdown.ToSafeHtml(panel.Brief);
        var members = panel.Memberships.Select(m => m.ExpertId).ToHashSet();
        Roster = await db.Experts.AsNoTracking().Where(e => !members.Contains(e.Id)).OrderBy(e => e.Name).ToListAsync();
        if (OpenRound is { } open)
        {
            var answered = await RoundResponses.AnsweredAsync(db, open.Id);
            Responded = panel.Memberships.ToDictionary(m => m.Id, m => answered.Contains(m.Id));
            CloseFailure = await RoundDeadlineService.LatestFailureAsync(db, panel.Id, open.Id);
        }
        ClosesAt ??= DateTime.UtcNow.Date.AddDays(15).AddHours(17);
        Contact = await Memberships.ContactOfAsync(db, panel);
        if (string.Equals(Review, "conclude", StringComparison.OrdinalIgnoreCase) && CanConclude && await results.BuildAsync(panel.Id) is { } view)
        {
            Conclusion = ConclusionReview.From(panel, view);
        }
        return Page();
    }

    public async Task<IActionResult> OnPostAddMemberAsync(int expertId) =>
        await LinkResult(await memberships.AddMemberAsync(Id, expertId, Audit.ActorOf(User), ApiResults.BaseUrl(Request)), "Added");

    public async Task<IActionResult> OnPostReissueAsync(int membershipId) =>
        await LinkResult(await memberships.ReissueLinkAsync(Id, membershipId, Audit.ActorOf(User), ApiResults.BaseUrl(Request)), "New link issued for");

    public async Task<IActionResult> OnPostRevokeAsync(int membershipId) =>
        await Done(await memberships.RevokeLinkAsync(Id, membershipId, Audit.ActorOf(User)),
            "Link revoked: it no longer opens anything, and its answers stop counting. Re-issue a link to re-admit the expert.");

    public async Task<IActionResult> OnPostRemoveQuestionAsync(int questionId) =>
        await Done(await setup.RemoveQuestionAsync(Id, questionId, Audit.ActorOf(User)), "Question removed.");

    public async Task<IActionResult> OnPostOpenRoundAsync()
    {
        var result = await rounds.OpenRoundAsync(Id, ClosesAt is { } c ? DateTime.SpecifyKind(c, DateTimeKind.Utc) : null, Audit.ActorOf(User));
        return await Done(result, result.Value is { } r
            ? $"Round {r.Number} is open until {PageSupport.Utc(r.ClosesAt)}. Experts see its questions through their links now."
            : "");
    }

    public async Task<IActionResult> OnPostCloseRoundAsync(int number) =>
        await Done(await rounds.CloseRoundAsync(Id, number, Audit.ActorOf(User)),
            $"Round {number} closed: its feedback is frozen and experts can no longer answer it. Open the next round or review and conclude.");

    public async Task<IActionResult> OnPostRemindAsync()
    {
        var result = await memberships.SendRemindersAsync(Id, Audit.ActorOf(User));
        return await Done(result, result.Value is { Failed: > 0 } r
            ? $"Reminders sent: {r.Sent}; {r.Failed} could not be sent (recorded in the audit log as mail.failed)."
            : $"Reminders sent: {result.Value?.Sent}.");
    }

    /// <summary>Records (or, with an empty field, clears) a calibration question's true value; the number is read with a decimal point.</summary>
    public async Task<IActionResult> OnPostTrueValueAsync(int questionId, string? trueValue)
    {
        double? value = null;
        if (!string.IsNullOrWhiteSpace(trueValue))
        {
            var reading = Numbers.TryParseEntry(trueValue, DecimalSeparator.Point);
            if (!reading.IsValid)
            {
                ModelState.AddModelError("trueValue", "The true value " + reading.Error);
                return await LoadAsync();
            }
            value = reading.Value;
        }
        return await Done(await truths.RecordAsync(Id, questionId, value, Audit.ActorOf(User)), value is null ? "True value cleared." : "True value recorded.");
    }

    /// <summary>
    /// Declares a relation through the same use case as <c>POST /api/panels/{id}/relations</c> (its rules, its
    /// audit event); the page only reads the typed unit factors. Errors stand beside their fields.
    /// </summary>
    public async Task<IActionResult> OnPostDeclareRelationAsync()
    {
        RelationTermInput Term(string field, RelationTermForm t)
        {
            double? factor = null;
            if (!string.IsNullOrWhiteSpace(t.Factor))
            {
                var reading = Numbers.TryParseEntry(t.Factor, DecimalSeparator.Point);
                if (reading.IsValid)
                {
                    factor = reading.Value;
                }
                else
                {
                    ModelState.AddModelError($"Relation.{field}.Factor", "The unit factor " + reading.Error);
                }
            }
            return new RelationTermInput(t.QuestionId, t.Label, t.Unit, factor);
        }
        var input = new RelationInput(Relation.Shape, Term("Result", Relation.Result), Term("First", Relation.First), Term("Second", Relation.Second));
        if (ModelState.ErrorCount > 0)
        {
            return await LoadAsync();
        }
        var result = await relations.AddAsync(Id, input, Audit.ActorOf(User));
        if (result.IsOk)
        {
            return Back("Relation declared: " + RelationDto.FormulaOf(result.Value!));
        }
        ModelState.AddResult(result, "Relation");
        return await LoadAsync();
    }

    public async Task<IActionResult> OnPostRemoveRelationAsync(int relationId) =>
        await Done(await relations.RemoveAsync(Id, relationId, Audit.ActorOf(User)), "Relation removed.");

    /// <summary>The errors beside a field of the page's forms (<c>Relation.Result.Factor</c>; keys ignore case), or null.</summary>
    public string? ErrorFor(string key) =>
        ModelState.TryGetValue(key, out var entry) && entry.Errors.Count > 0 ? string.Join(" ", entry.Errors.Select(e => e.ErrorMessage)) : null;

    /// <summary>
    /// Concludes the panel once the facilitator has ticked "I have read this summary" under the review of what
    /// would be published; the message afterwards says what was published and on how few answers.
    /// </summary>
    public async Task<IActionResult> OnPostConcludeAsync()
    {
        if (!ConfirmConclusion)
        {
            ModelState.AddModelError(nameof(ConfirmConclusion), "Read the summary of what would be published, then tick \u201cI have read this summary\u201d to conclude.");
            Review = "conclude";
            return await LoadAsync();
        }
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).Include(p => p.Rounds).FirstOrDefaultAsync(p => p.Id == Id);
        var review = panel is not null && await results.BuildAsync(Id) is { } view ? ConclusionReview.From(panel, view) : null;
        var result = await conclusion.ConcludeAsync(Id, Audit.ActorOf(User));
        if (!result.IsOk)
        {
            Review = "conclude";
        }
        return await Done(result, review?.PublishedText() ?? "Panel concluded; the consensus is published.");
    }

    private async Task<IActionResult> LinkResult(Result<IssuedLink> result, string verb)
    {
        if (result.IsOk)
        {
            var issued = result.Value!;
            var name = await db.Memberships.AsNoTracking().Where(m => m.Id == issued.MembershipId).Select(m => m.Expert!.Name).FirstOrDefaultAsync() ?? issued.PanelCode;
            var links = PeekLinks().Prepend(new IssuedLinkView(Id, name, issued.PanelCode, $"{ApiResults.BaseUrl(Request)}{issued.Path}")).ToList();
            TempData[LinksKey] = JsonSerializer.Serialize(links);
            return Back($"{verb} {name} ({issued.PanelCode}): copy the personal link below now; it is shown only on this visit. It was also sent by email (or written to the outbox without a mail server).");
        }
        return await Done(result, "");
    }

    private async Task<IActionResult> Done<T>(Result<T> result, string flash)
    {
        if (result.IsOk)
        {
            return Back(flash);
        }
        ModelState.AddResult(result, "");
        return await LoadAsync();
    }

    /// <summary>Back to the page after an action, with its message; the links issued on this visit stay listed.</summary>
    private RedirectToPageResult Back(string flash)
    {
        Flash = flash;
        TempData[ReturningKey] = true;
        TempData.Keep(LinksKey);
        return RedirectToPage(new { id = Id });
    }

    /// <summary>The links issued on this visit to this panel (read without using them up).</summary>
    private List<IssuedLinkView> PeekLinks()
    {
        if (TempData.Peek(LinksKey) is not string json)
        {
            return [];
        }
        try
        {
            return (JsonSerializer.Deserialize<List<IssuedLinkView>>(json) ?? []).Where(l => l.PanelId == Id).ToList();
        }
        catch (JsonException)
        {
            return [];
        }
    }
}
