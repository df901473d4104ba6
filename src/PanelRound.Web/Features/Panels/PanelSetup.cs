using Microsoft.EntityFrameworkCore;
using PanelRound.Core.Domain;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Panels;

/// <summary>
/// A panel as created or edited. <paramref name="TimeZone"/> is an IANA name (default <c>UTC</c>): messages to
/// experts give each deadline in UTC and in this zone. The contact is whom experts ask about the panel; without
/// one, messages name the facilitator who created it.
/// </summary>
public sealed record PanelInput(string? Title, string? Brief, DateOnly? StartsOn, string? TargetPeriods, PanelSettingsInput? Settings = null,
    string? TimeZone = null, string? ContactName = null, string? ContactEmail = null);

public sealed record QuestionInput(
    int? IndicatorId, string? Label, string? HelpText, string? Format, double? HardMin, double? HardMax,
    double? PlausibleMin, double? PlausibleMax, string? TargetPeriods = null, bool? Calibration = null, bool? LogScale = null);

/// <summary>
/// Setting up a panel while it is a draft: its title, brief, start, target periods and settings,
/// and its questions. Every change is audited in the same save.
/// </summary>
public sealed class PanelSetup(PanelRoundDbContext db, TimeProvider clock)
{
    /// <summary>The most target periods a panel may have (40 quarters, ten years).</summary>
    public const int MaxTargetPeriods = 40;

    private DateTime Now => clock.GetUtcNow().UtcDateTime;

    private void Log(string actor, string action, string entityType, object entityId, int? panelId, object? details = null) =>
        Audit.Record(db, actor, action, entityType, entityId, panelId, details, Now);

    public async Task<Result<Panel>> CreatePanelAsync(PanelInput input, string actor)
    {
        var panel = new Panel { CreatedAt = Now, CreatedBy = actor, State = PanelState.Draft, Version = Guid.NewGuid() };
        var errors = Apply(panel, input);
        if (errors.Any)
        {
            return Result<Panel>.Invalid(errors);
        }
        db.Panels.Add(panel);
        await db.SaveChangesAsync();
        Log(actor, "panel.created", "Panel", panel.Id, panel.Id, new { panel.Title, panel.TargetPeriods });
        await db.SaveChangesAsync();
        return Result<Panel>.Ok(panel);
    }

    public async Task<Result<Panel>> UpdatePanelAsync(int panelId, PanelInput input, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<Panel>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Result<Panel>.Conflict("The panel can be edited only while it is a draft (before round 1 opens).");
        }
        var errors = Apply(panel, input);
        var periods = panel.TargetPeriods.Split(',');
        // A calibration question asks about its own period (often a quarter that has just ended), not the panel's.
        foreach (var q in panel.Questions.Where(q => !q.IsCalibration && q.TargetPeriods.Split(',').Any(p => !periods.Contains(p))))
        {
            errors.Add("targetPeriods", $"Question \"{q.Label}\" asks about {q.TargetPeriods.Replace(",", ", ", StringComparison.Ordinal)}: edit it or keep those periods.");
        }
        if (errors.Any)
        {
            db.ChangeTracker.Clear();
            return Result<Panel>.Invalid(errors);
        }
        panel.Version = Guid.NewGuid();
        Log(actor, "panel.edited", "Panel", panel.Id, panel.Id, new { panel.Title, panel.TargetPeriods, panel.Settings });
        await db.SaveChangesAsync();
        return Result<Panel>.Ok(panel);
    }

    private static FieldErrors Apply(Panel panel, PanelInput input)
    {
        var errors = new FieldErrors();
        panel.Title = errors.Required("title", input.Title, FieldLengths.Title, "Title");
        panel.Brief = errors.Optional("brief", input.Brief, FieldLengths.Brief, "Brief") ?? "";
        if (input.StartsOn is not { } starts)
        {
            errors.Add("startsOn", "The start date is required: the reference series is what was observed before it.");
        }
        else
        {
            panel.StartsOn = starts;
        }
        if (!Period.TryParseList(input.TargetPeriods, out var periods, out var periodError))
        {
            errors.Add("targetPeriods", periodError!);
        }
        else if (periods.Count > MaxTargetPeriods)
        {
            errors.Add("targetPeriods", $"At most {MaxTargetPeriods} target periods.");
        }
        else
        {
            if (input.StartsOn is { } s && periods.Any(p => p.EndDate < s))
            {
                errors.Add("targetPeriods", "Every target period must end after the panel's start.");
            }
            panel.TargetPeriods = string.Join(",", periods);
        }
        PanelSettingsRules.Apply(panel.Settings, input.Settings, errors);
        var zone = string.IsNullOrWhiteSpace(input.TimeZone) ? "UTC" : input.TimeZone.Trim();
        if (PanelTimes.Find(zone) is null)
        {
            errors.Add("timeZone", $"\"{(zone.Length > FieldLengths.TimeZone ? zone[..FieldLengths.TimeZone] + "…" : zone)}\" is not a time zone this server knows: give an IANA name such as Europe/Lisbon, America/New_York or UTC.");
        }
        else
        {
            panel.TimeZone = zone;
        }
        panel.ContactName = errors.Optional("contactName", input.ContactName, FieldLengths.Name, "Contact name");
        var email = errors.Optional("contactEmail", input.ContactEmail, FieldLengths.Email, "Contact email");
        if (email is not null && !MailAddresses.IsValid(email))
        {
            errors.Add("contactEmail", "Contact email is not an address mail can be sent to (one address such as research@firm.example).");
        }
        panel.ContactEmail = email;
        return errors;
    }

    public async Task<Result<Question>> AddQuestionAsync(int panelId, QuestionInput input, string actor) =>
        await SaveQuestionAsync(panelId, null, input, actor);

    public async Task<Result<Question>> UpdateQuestionAsync(int panelId, int questionId, QuestionInput input, string actor) =>
        await SaveQuestionAsync(panelId, questionId, input, actor);

    private async Task<Result<Question>> SaveQuestionAsync(int panelId, int? questionId, QuestionInput input, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        if (panel is null)
        {
            return Result<Question>.NotFound($"Panel {panelId} does not exist.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Result<Question>.Conflict("Questions can be changed only while the panel is a draft.");
        }
        var question = questionId is { } qid ? panel.Questions.FirstOrDefault(q => q.Id == qid) : new Question { Order = panel.Questions.Count + 1 };
        if (question is null)
        {
            return Result<Question>.NotFound($"Question {questionId} is not on panel {panelId}.");
        }
        var errors = new FieldErrors();
        question.Label = errors.Required("label", input.Label, FieldLengths.Title, "Label");
        question.HelpText = errors.Optional("helpText", input.HelpText, FieldLengths.Description, "Help text");
        if (input.IndicatorId is not { } indicatorId || !await db.Indicators.AnyAsync(i => i.Id == indicatorId))
        {
            errors.Add("indicatorId", "Choose an existing indicator.");
        }
        else
        {
            question.IndicatorId = indicatorId;
        }
        if (!Enum.TryParse<ResponseFormat>(input.Format ?? "Point", ignoreCase: true, out var format) || !Enum.IsDefined(format))
        {
            errors.Add("format", "Response format is Point or Range.");
        }
        question.Format = format;
        foreach (var (field, v) in new[] { ("hardMin", input.HardMin), ("hardMax", input.HardMax), ("plausibleMin", input.PlausibleMin), ("plausibleMax", input.PlausibleMax) })
        {
            errors.Finite(field, v, "Bound");
        }
        if (input.HardMin is { } hmin && input.HardMax is { } hmax && hmin >= hmax)
        {
            errors.Add("hardMax", "The hard maximum must be above the hard minimum.");
        }
        if (input.PlausibleMin is { } pmin && input.PlausibleMax is { } pmax && pmin >= pmax)
        {
            errors.Add("plausibleMax", "The plausible maximum must be above the plausible minimum.");
        }
        if (input.PlausibleMin < input.HardMin || input.PlausibleMax > input.HardMax)
        {
            errors.Add("plausibleMin", "The plausible range must lie within the hard bounds.");
        }
        (question.HardMin, question.HardMax, question.PlausibleMin, question.PlausibleMax) = (input.HardMin, input.HardMax, input.PlausibleMin, input.PlausibleMax);
        var panelPeriods = Period.TryParseList(panel.TargetPeriods, out var pp, out _) ? pp : [];
        question.IsCalibration = input.Calibration ?? question.IsCalibration;
        question.LogScale = input.LogScale ?? question.LogScale;
        if (!question.IsCalibration)
        {
            (question.TrueValue, question.TrueValueRecordedAt) = (null, null);
        }
        if (question.IsCalibration)
        {
            CalibrationQuestionRules(question, input, panelPeriods, errors);
        }
        else if (string.IsNullOrWhiteSpace(input.TargetPeriods))
        {
            question.TargetPeriods = panel.TargetPeriods;
        }
        else if (!Period.TryParseList(input.TargetPeriods, out var qp, out var err))
        {
            errors.Add("targetPeriods", err!);
        }
        else if (qp.Any(p => !panelPeriods.Contains(p)))
        {
            errors.Add("targetPeriods", $"A question's target periods are some of the panel's ({panel.TargetPeriods}).");
        }
        else
        {
            question.TargetPeriods = string.Join(",", qp);
        }
        if (errors.Any)
        {
            db.ChangeTracker.Clear();
            return Result<Question>.Invalid(errors);
        }
        if (questionId is null)
        {
            panel.Questions.Add(question);
        }
        // The panel's version guards against a round opening while its questions change.
        panel.Version = Guid.NewGuid();
        try
        {
            await db.SaveChangesAsync();
        }
        catch (DbUpdateConcurrencyException)
        {
            return Result<Question>.Conflict("The panel changed meanwhile (a round may have opened); reload and try again.");
        }
        Log(actor, questionId is null ? "question.added" : "question.edited", "Question", question.Id, panelId,
            new { question.Label, question.Format, question.TargetPeriods, Calibration = question.IsCalibration, question.LogScale });
        await db.SaveChangesAsync();
        return Result<Question>.Ok(question);
    }

    /// <summary>
    /// A calibration question is a Range question about one period, which need not be one of the
    /// panel's (it is usually a period that has just ended and whose figure is not yet published).
    /// </summary>
    private static void CalibrationQuestionRules(Question question, QuestionInput input, IReadOnlyList<Period> panelPeriods, FieldErrors errors)
    {
        if (question.Format != ResponseFormat.Range)
        {
            errors.Add("format", "A calibration question is a Range question (P10 / P50 / P90).");
        }
        if (string.IsNullOrWhiteSpace(input.TargetPeriods))
        {
            if (panelPeriods.Count == 1)
            {
                question.TargetPeriods = panelPeriods[0].ToString();
            }
            else
            {
                errors.Add("targetPeriods", "A calibration question asks about one period: give it, e.g. 2026Q3.");
            }
        }
        else if (!Period.TryParseList(input.TargetPeriods, out var periods, out var err))
        {
            errors.Add("targetPeriods", err!);
        }
        else if (periods.Count != 1)
        {
            errors.Add("targetPeriods", "A calibration question asks about one period, e.g. 2026Q3.");
        }
        else
        {
            question.TargetPeriods = periods[0].ToString();
        }
    }

    public async Task<Result<bool>> RemoveQuestionAsync(int panelId, int questionId, string actor)
    {
        var panel = await db.Panels.Include(p => p.Questions).FirstOrDefaultAsync(p => p.Id == panelId);
        var question = panel?.Questions.FirstOrDefault(q => q.Id == questionId);
        if (panel is null || question is null)
        {
            return Result<bool>.NotFound($"Question {questionId} is not on panel {panelId}.");
        }
        if (panel.State != PanelState.Draft)
        {
            return Result<bool>.Conflict("Questions can be removed only while the panel is a draft.");
        }
        db.Questions.Remove(question);
        Log(actor, "question.removed", "Question", questionId, panelId, new { question.Label });
        await db.SaveChangesAsync();
        return Result<bool>.Ok(true);
    }
}
