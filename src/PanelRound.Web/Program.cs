using PanelRound.Data;
using PanelRound.Web;
using PanelRound.Web.Commands;
using PanelRound.Web.Infrastructure;

var command = AdminCommands.CommandOf(args);
var builder = WebApplication.CreateBuilder(AdminCommands.ConfigArgs(args));

builder.AddPanelRoundData();
builder.AddPanelRoundAuth();
builder.AddPanelRoundHealth();
builder.AddPanelRoundWeb();

var app = builder.Build();

if (command is not null)
{
    return await AdminCommands.RunAsync(app, command, args[1..]);
}

await app.PrepareDatabaseAsync();

app.UsePanelRoundPipeline();
app.MapPanelRoundHealth();
app.MapPanelRoundApis();
app.MapRazorPages();

await app.RunAsync();
return 0;

/// <summary>The entry point, visible to the integration tests.</summary>
public partial class Program;
