using PanelRound.Data;
using PanelRound.Web;
using PanelRound.Web.Commands;
using PanelRound.Web.Features;
using PanelRound.Web.Features.Account;
using PanelRound.Web.Features.Admin;
using PanelRound.Web.Features.Answers;
using PanelRound.Web.Features.Benchmarks;
using PanelRound.Web.Features.Calibration;
using PanelRound.Web.Features.Imports;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Outcomes;
using PanelRound.Web.Features.Relations;
using PanelRound.Web.Features.Panels;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Features.Roster;
using PanelRound.Web.Features.Rounds;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;
using PanelRound.Web.Reports;

var command = AdminCommands.CommandOf(args);
var builder = WebApplication.CreateBuilder(AdminCommands.ConfigArgs(args));

builder.AddPanelRoundData();
builder.AddPanelRoundAuth();
builder.AddPanelRoundHardening();
builder.AddPanelRoundHealth();
builder.AddPanelRoundWeb();
builder.AddPanelRoundFeatures();

var app = builder.Build();

if (command is not null)
{
    return await AdminCommands.RunAsync(app, command, args[1..]);
}

await app.PrepareDatabaseAsync();

app.UsePanelRoundPipeline();
app.MapPanelRoundHealth();

// The JSON API: one class per feature, beside its use cases (Features/<Feature>/...Api.cs).
app.MapAccountApi();
app.MapIndicatorsApi();
app.MapRosterApi();
app.MapPanelsApi();
app.MapRoundsApi();
app.MapExpertApi();
app.MapResultsApi();
app.MapBenchmarksApi();
app.MapRelationsApi();
app.MapOutcomesApi();
app.MapScorecardApi();
app.MapCalibrationApi();
app.MapImportsApi();
app.MapAuditApi();
app.MapReportsApi();

// The pages (Pages/<Area>/<Page>.cshtml); their page models call the same use cases in Features/.
app.MapRazorPages();

await app.RunAsync();
return 0;

/// <summary>The entry point, visible to the integration tests.</summary>
public partial class Program;
