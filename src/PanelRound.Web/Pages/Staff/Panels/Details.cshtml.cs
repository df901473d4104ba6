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
    PanelRelations relations) : PageModel
{
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

    [TempData]
    public string? IssuedLink { get; set; }

    [TempData]
    public string? Notice { get; set; }

    [BindProperty]
    public DateTime? ClosesAt { get; set; }

    /// <summary>The latest failed deadline close of the open round, shown until the round closes.</summary>
    public (DateTime At, RoundDeadlineService.CloseFailure Failure)? CloseFailure { get; private set; }

    public Round? OpenRound => Panel.Rounds.FirstOrDefault(r => r.State == RoundState.Open);

    public async Task<IActionResult> OnGetAsync()
    {
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
        return Page();
    }

    public async Task<IActionResult> OnPostAddMemberAsync(int expertId) =>
        await LinkResult(await memberships.AddMemberAsync(Id, expertId, Audit.ActorOf(User), ApiResults.BaseUrl(Request)));

    public async Task<IActionResult> OnPostReissueAsync(int membershipId) =>
        await LinkResult(await memberships.ReissueLinkAsync(Id, membershipId, Audit.ActorOf(User), ApiResults.BaseUrl(Request)));

    public async Task<IActionResult> OnPostRevokeAsync(int membershipId) =>
        await Done(await memberships.RevokeLinkAsync(Id, membershipId, Audit.ActorOf(User)), "Link revoked.");

    public async Task<IActionResult> OnPostRemoveQuestionAsync(int questionId) =>
        await Done(await setup.RemoveQuestionAsync(Id, questionId, Audit.ActorOf(User)), "Question removed.");

    public async Task<IActionResult> OnPostOpenRoundAsync() =>
        await Done(await rounds.OpenRoundAsync(Id, ClosesAt is { } c ? DateTime.SpecifyKind(c, DateTimeKind.Utc) : null, Audit.ActorOf(User)), "Round opened.");

    public async Task<IActionResult> OnPostCloseRoundAsync(int number) =>
        await Done(await rounds.CloseRoundAsync(Id, number, Audit.ActorOf(User)), $"Round {number} closed; its feedback is frozen.");

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
                return await OnGetAsync();
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
            return await OnGetAsync();
        }
        var result = await relations.AddAsync(Id, input, Audit.ActorOf(User));
        if (result.IsOk)
        {
            Notice = "Relation declared: " + RelationDto.FormulaOf(result.Value!);
            return RedirectToPage(new { id = Id });
        }
        ModelState.AddResult(result, "Relation");
        return await OnGetAsync();
    }

    public async Task<IActionResult> OnPostRemoveRelationAsync(int relationId) =>
        await Done(await relations.RemoveAsync(Id, relationId, Audit.ActorOf(User)), "Relation removed.");

    /// <summary>The errors beside a field of the page's forms (<c>Relation.Result.Factor</c>; keys ignore case), or null.</summary>
    public string? ErrorFor(string key) =>
        ModelState.TryGetValue(key, out var entry) && entry.Errors.Count > 0 ? string.Join(" ", entry.Errors.Select(e => e.ErrorMessage)) : null;

    public async Task<IActionResult> OnPostConcludeAsync() =>
        await Done(await conclusion.ConcludeAsync(Id, Audit.ActorOf(User)), "Panel concluded; the consensus is published.");

    private async Task<IActionResult> LinkResult(Result<IssuedLink> result)
    {
        if (result.IsOk)
        {
            IssuedLink = $"{result.Value!.PanelCode}|{ApiResults.BaseUrl(Request)}{result.Value.Path}";
            return RedirectToPage(new { id = Id });
        }
        return await Done(result, "");
    }

    private async Task<IActionResult> Done<T>(Result<T> result, string notice)
    {
        if (result.IsOk)
        {
            Notice = notice;
            return RedirectToPage(new { id = Id });
        }
        ModelState.AddResult(result, "");
        return await OnGetAsync();
    }
}
