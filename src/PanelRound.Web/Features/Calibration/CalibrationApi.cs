using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Calibration;

/// <summary>Calibration questions in the API: their true values, each expert's scores and weight by panel code, the cross-validation.</summary>
public static class CalibrationApi
{
    public static IEndpointRouteBuilder MapCalibrationApi(this IEndpointRouteBuilder app)
    {
        var staff = app.MapGroup("/api/panels").WithTags("Calibration").RequireAuthorization(AuthSetup.StaffPolicy);
        staff.MapGet("/{id:int}/calibration", GetCalibration).WithName("GetPanelCalibration")
            .WithSummary("Per panel code: hits per bin (below P10, P10-P50, P50-P90, above P90), N, calibration, information and weight; the combinations' scores; the settings used.");
        staff.MapGet("/{id:int}/calibration/cross-validation", GetCrossValidation).WithName("GetPanelCalibrationCrossValidation")
            .WithSummary("Weights fitted on training parts of the calibration questions, equal and performance-weighted combinations scored on the rest (query: trainingSize, default half).");

        var f = app.MapGroup("/api/panels").WithTags("Calibration").RequireAuthorization(AuthSetup.FacilitatorPolicy);
        f.MapPut("/{id:int}/questions/{questionId:int}/true-value", RecordTrueValue).WithName("RecordTrueValue")
            .WithSummary("Records a calibration question's true value ({\"value\": number}; null clears it). Experts never see it.");
        return app;
    }

    public static async Task<Results<Ok<PanelCalibrationView>, ProblemHttpResult>> GetCalibration(int id, CalibrationResults calibration) =>
        await calibration.ViewAsync(id) is { } view ? TypedResults.Ok(view) : ApiResults.NotFound($"Panel {id} does not exist.");

    public static async Task<Results<Ok<CrossValidationView>, ValidationProblem, ProblemHttpResult>> GetCrossValidation(
        int id, int? trainingSize, CalibrationResults calibration) =>
        (await calibration.CrossValidateAsync(id, trainingSize)).ToOk(v => v);

    public static async Task<Results<Ok<QuestionDto>, ValidationProblem, ProblemHttpResult>> RecordTrueValue(
        int id, int questionId, TrueValueInput input, CalibrationTruths truths, ClaimsPrincipal user) =>
        (await truths.RecordAsync(id, questionId, input.Value, Audit.ActorOf(user))).ToOk(QuestionDto.From);
}
