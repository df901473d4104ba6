using Microsoft.AspNetCore.Http.HttpResults;
using PanelRound.Data;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Reports;

/// <summary>The consensus as files for the financial model (CSV, XLSX) and the panel's dossier (PDF), with the same rights as the results.</summary>
public static class ReportsApi
{
    public static IEndpointRouteBuilder MapReportsApi(this IEndpointRouteBuilder app)
    {
        var g = app.MapGroup("/api/panels").WithTags("Exports").RequireAuthorization(AuthSetup.StaffPolicy);
        g.MapGet("/{id:int}/consensus.csv", ConsensusCsv).WithName("GetConsensusCsv")
            .WithSummary("The published consensus as CSV: panel_id,panel,question_id,question,indicator,unit,format,period,consensus,low,high,band,n,method,round,published_at. "
                + "With include=benchmarks,derived (either or both): the benchmark paths and derived series as extra rows and a last column source (consensus, benchmark:<method>, derived).");
        g.MapGet("/{id:int}/consensus.xlsx", ConsensusXlsx).WithName("GetConsensusXlsx")
            .WithSummary("The published consensus as a workbook: the tidy sheet, one sheet per question laid out by period, and the method; include= as for the CSV.");
        g.MapGet("/{id:int}/report.pdf", Dossier).WithName("GetPanelDossier")
            .WithSummary("The panel's audit-ready dossier (PDF): method, rounds, consensus, rationales, audit trail.");
        var sc = app.MapGroup("/api/scorecard").WithTags("Exports").RequireAuthorization(AuthSetup.StaffPolicy);
        sc.MapGet("/experts.csv", ScorecardCsv).WithName("GetScorecardCsv")
            .WithSummary("One row per expert with every scorecard figure and its n; the same filters as GET /api/scorecard (indicator, period).");
        sc.MapGet("/report.pdf", ScorecardPdf).WithName("GetScorecardReport")
            .WithSummary("The scorecard, the consensus and the no-change forecast scored alike, and the backtest, as a PDF; filters as GET /api/scorecard.");
        return app;
    }

    public static async Task<FileContentHttpResult> ScorecardCsv(string? indicator, string? period, ScorecardService scorecard)
    {
        var card = await ScorecardApi.BuildScorecardAsync(indicator, period, scorecard);
        return TypedResults.File(ScorecardReport.ToCsv(card), CsvType, "scorecard-experts.csv");
    }

    public static async Task<FileContentHttpResult> ScorecardPdf(string? indicator, string? period, ScorecardService scorecard, TimeProvider clock)
    {
        var card = await ScorecardApi.BuildScorecardAsync(indicator, period, scorecard);
        var backtest = (await ScorecardApi.GetBacktest(scorecard)).Value!;
        return TypedResults.File(ScorecardReport.ToPdf(card, backtest, clock.GetUtcNow().UtcDateTime), "application/pdf", "scorecard.pdf");
    }

    public const string CsvType = "text/csv; charset=utf-8";
    public const string XlsxType = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";

    public static async Task<Results<FileContentHttpResult, ValidationProblem, ProblemHttpResult>> ConsensusCsv(int id, string? include, PanelRoundDbContext db, PanelResults results)
    {
        var errors = new FieldErrors();
        if (!ConsensusExtras.TryParseInclude(include, errors, out var benchmarks, out var derived))
        {
            return TypedResults.ValidationProblem(errors.ToDictionary(), title: "The input has errors.");
        }
        var loaded = await ConsensusExport.LoadAsync(db, id);
        if (Check(id, loaded) is { } problem)
        {
            return problem;
        }
        var bytes = include is null ? ConsensusExport.ToCsv(loaded!.Value.Rows)
            : ConsensusExport.ToCsv(await ConsensusExtras.ExtendAsync(db, results, loaded!.Value.Panel, loaded.Value.Rows, benchmarks, derived), withSource: true);
        return TypedResults.File(bytes, CsvType, $"consensus-panel-{id}.csv");
    }

    public static async Task<Results<FileContentHttpResult, ValidationProblem, ProblemHttpResult>> ConsensusXlsx(int id, string? include, PanelRoundDbContext db, PanelResults results)
    {
        var errors = new FieldErrors();
        if (!ConsensusExtras.TryParseInclude(include, errors, out var benchmarks, out var derived))
        {
            return TypedResults.ValidationProblem(errors.ToDictionary(), title: "The input has errors.");
        }
        var loaded = await ConsensusExport.LoadAsync(db, id);
        if (Check(id, loaded) is { } problem)
        {
            return problem;
        }
        var bytes = include is null ? ConsensusExport.ToXlsx(loaded!.Value.Panel, loaded.Value.Rows)
            : ConsensusExport.ToXlsx(loaded!.Value.Panel, await ConsensusExtras.ExtendAsync(db, results, loaded.Value.Panel, loaded.Value.Rows, benchmarks, derived), withSource: true);
        return TypedResults.File(bytes, XlsxType, $"consensus-panel-{id}.xlsx");
    }

    public static async Task<Results<FileContentHttpResult, ProblemHttpResult>> Dossier(int id, PanelRoundDbContext db, PanelResults results, TimeProvider clock)
    {
        var bytes = await PanelDossier.BuildAsync(db, results, id, clock.GetUtcNow().UtcDateTime);
        return bytes is null ? ApiResults.NotFound($"Panel {id} does not exist.") : TypedResults.File(bytes, "application/pdf", $"dossier-panel-{id}.pdf");
    }

    private static ProblemHttpResult? Check(int id, (PanelRound.Data.Entities.Panel Panel, IReadOnlyList<ConsensusRow> Rows)? loaded) =>
        loaded is null ? ApiResults.NotFound($"Panel {id} does not exist.")
        : loaded.Value.Panel.State != PanelRound.Data.Entities.PanelState.Concluded
            ? TypedResults.Problem("The panel has not concluded: no consensus is published yet.", statusCode: StatusCodes.Status409Conflict, title: "Conflict")
            : null;
}
