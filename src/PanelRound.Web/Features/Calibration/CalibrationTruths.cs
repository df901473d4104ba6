using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Calibration;

/// <summary>A calibration question's true value as the API sends it; null clears it.</summary>
public sealed record TrueValueInput(double? Value);

/// <summary>
/// Records a calibration question's true value once it is known, at any stage of the panel (the
/// truth usually arrives after the round closes). Audited; experts never see it.
/// </summary>
public sealed class CalibrationTruths(PanelRoundDbContext db, TimeProvider clock)
{
    public async Task<Result<Question>> RecordAsync(int panelId, int questionId, double? value, string actor)
    {
        var question = await db.Questions.FirstOrDefaultAsync(q => q.Id == questionId && q.PanelId == panelId);
        if (question is null)
        {
            return Result<Question>.NotFound($"Question {questionId} is not on panel {panelId}.");
        }
        var errors = new FieldErrors();
        if (!question.IsCalibration)
        {
            errors.Add("questionId", $"Question {questionId} is not a calibration question: its outcome is recorded as an observation of its indicator.");
        }
        errors.Finite("value", value, "The true value");
        if (errors.Any)
        {
            return Result<Question>.Invalid(errors);
        }
        var now = clock.GetUtcNow().UtcDateTime;
        var before = question.TrueValue;
        question.TrueValue = value;
        question.TrueValueRecordedAt = value is null ? null : now;
        Audit.Record(db, actor, "calibration.true-value.recorded", "Question", question.Id, panelId, new { before, after = value }, now);
        await db.SaveChangesAsync();
        return Result<Question>.Ok(question);
    }
}
