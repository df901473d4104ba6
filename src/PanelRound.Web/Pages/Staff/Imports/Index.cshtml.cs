using System.Diagnostics;
using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.Extensions.Options;
using PanelRound.Web.Features.Imports;
using PanelRound.Web.Features.Scorecard;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Imports;

[Authorize(Policy = AuthSetup.FacilitatorPolicy)]
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class IndexModel(PastPanelImport import, IOptions<ScoringOptions> options) : PageModel
{
    /// <summary>The publication lag assumed for observations without observed_on.</summary>
    public int LagDays => options.Value.ImportPublicationLagDays;

    public IReadOnlyList<KeyValuePair<string, string[]>> Errors { get; private set; } = [];

    public PastPanelImportResult? Result { get; private set; }

    public double Seconds { get; private set; }

    public void OnGet()
    {
    }

    public async Task<IActionResult> OnPostAsync(IFormFile? forecasts, IFormFile? observations)
    {
        if (forecasts is null || forecasts.Length == 0)
        {
            Errors = [new("forecasts", ["Choose the forecasts file."])];
            return Page();
        }
        var watch = Stopwatch.StartNew();
        await using var f = forecasts.OpenReadStream();
        await using var o = observations is { Length: > 0 } ? observations.OpenReadStream() : null;
        var result = await import.ImportAsync(f, o, Audit.ActorOf(User));
        Seconds = watch.Elapsed.TotalSeconds;
        if (!result.IsOk)
        {
            Errors = result.Errors.Count > 0 ? [.. result.Errors] : [new("import", [result.Message ?? "Nothing was imported."])];
            return Page();
        }
        Result = result.Value;
        return Page();
    }
}
