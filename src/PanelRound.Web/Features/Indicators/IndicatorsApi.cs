using System.Security.Claims;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Indicators;

/// <summary>Indicators with their observations in the API.</summary>
public static class IndicatorsApi
{
    public static IEndpointRouteBuilder MapIndicatorsApi(this IEndpointRouteBuilder app)
    {
        var indicators = app.MapGroup("/api/indicators").WithTags("Indicators");
        indicators.MapGet("/", ListIndicators).RequireAuthorization(AuthSetup.StaffPolicy).WithName("ListIndicators").WithSummary("All indicators.");
        indicators.MapPost("/", CreateIndicator).RequireAuthorization(AuthSetup.FacilitatorPolicy).WithName("CreateIndicator").WithSummary("Creates an indicator (key, name, unit, decimals).");
        indicators.MapGet("/{id:int}/observations", ListObservations).RequireAuthorization(AuthSetup.StaffPolicy).WithName("ListObservations").WithSummary("The current observations of an indicator, oldest first.");
        indicators.MapPost("/{id:int}/observations", RecordObservations).RequireAuthorization(AuthSetup.FacilitatorPolicy).WithName("RecordObservations")
            .WithSummary("Records observations all-or-nothing; a value for a period that has one is a correction (history kept).");
        indicators.MapPost("/{id:int}/observations/csv", ImportObservationsCsv).RequireAuthorization(AuthSetup.FacilitatorPolicy).DisableAntiforgery()
            .WithName("ImportObservationsCsv").WithSummary("Imports observations from a CSV file (multipart field 'file'; columns period, value, source, observed_on).");
        return app;
    }

    public static async Task<Ok<List<IndicatorDto>>> ListIndicators(PanelRoundDbContext db) =>
        TypedResults.Ok((await db.Indicators.AsNoTracking().OrderBy(i => i.Name).ToListAsync()).Select(IndicatorDto.From).ToList());

    public static async Task<Results<Created<IndicatorDto>, ValidationProblem, ProblemHttpResult>> CreateIndicator(
        IndicatorInput input, IndicatorCatalog catalog, ClaimsPrincipal user) =>
        (await catalog.CreateIndicatorAsync(input, Audit.ActorOf(user))).ToCreated(IndicatorDto.From, i => $"/api/indicators/{i.Id}");

    public static async Task<Results<Ok<List<ObservationDto>>, ProblemHttpResult>> ListObservations(int id, PanelRoundDbContext db)
    {
        if (!await db.Indicators.AnyAsync(i => i.Id == id))
        {
            return ApiResults.NotFound($"Indicator {id} does not exist.");
        }
        return TypedResults.Ok((await IndicatorCatalog.CurrentObservationsAsync(db, id)).Select(ObservationDto.From).ToList());
    }

    public static async Task<Results<Ok<ObservationImportResult>, ValidationProblem, ProblemHttpResult>> RecordObservations(
        int id, List<ObservationInput> input, IndicatorCatalog catalog, ClaimsPrincipal user) =>
        (await catalog.RecordObservationsAsync(id, input, Audit.ActorOf(user))).ToOk(r => r);

    public static async Task<Results<Ok<ObservationImportResult>, ValidationProblem, ProblemHttpResult>> ImportObservationsCsv(
        int id, IFormFile file, IndicatorCatalog catalog, ClaimsPrincipal user)
    {
        await using var stream = file.OpenReadStream();
        var parsed = ObservationCsv.Parse(stream);
        if (!parsed.IsOk)
        {
            return parsed.As<ObservationImportResult>().ToOk(r => r);
        }
        return (await catalog.RecordObservationsAsync(id, parsed.Value!, Audit.ActorOf(user), "rows")).ToOk(r => r);
    }
}
