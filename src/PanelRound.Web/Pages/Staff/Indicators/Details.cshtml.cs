using System.Text;
using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Indicators;

/// <summary>An indicator's observations: chart, table, correction history, and entry by form, paste or CSV upload.</summary>
[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class DetailsModel(PanelRoundDbContext db, IndicatorCatalog catalog) : PageModel
{
    [BindProperty(SupportsGet = true)]
    public int Id { get; set; }

    public Indicator Indicator { get; private set; } = null!;

    public IReadOnlyList<Observation> Current { get; private set; } = [];

    public IReadOnlyList<Observation> Superseded { get; private set; } = [];

    [BindProperty]
    public string? Pasted { get; set; }

    [BindProperty]
    public IFormFile? Upload { get; set; }

    [TempData]
    public string? Notice { get; set; }

    public List<string> ImportErrors { get; } = [];

    public async Task<IActionResult> OnGetAsync()
    {
        var indicator = await db.Indicators.AsNoTracking().FirstOrDefaultAsync(i => i.Id == Id);
        if (indicator is null)
        {
            return NotFound();
        }
        Indicator = indicator;
        var all = await db.Observations.AsNoTracking().Where(o => o.IndicatorId == Id).OrderBy(o => o.PeriodSortKey).ThenBy(o => o.RecordedAt).ToListAsync();
        Current = all.Where(o => o.SupersededAt == null).ToList();
        Superseded = all.Where(o => o.SupersededAt != null).ToList();
        return Page();
    }

    public async Task<IActionResult> OnPostAsync()
    {
        Stream? stream = Upload is { Length: > 0 } file ? file.OpenReadStream()
            : string.IsNullOrWhiteSpace(Pasted) ? null : new MemoryStream(Encoding.UTF8.GetBytes(WithHeader(Pasted)));
        if (stream is null)
        {
            ImportErrors.Add("Paste rows or choose a CSV file.");
            return await OnGetAsync();
        }
        await using (stream)
        {
            var parsed = ObservationCsv.Parse(stream);
            var result = parsed.IsOk
                ? await catalog.RecordObservationsAsync(Id, parsed.Value!, Audit.ActorOf(User), "row")
                : parsed.As<ObservationImportResult>();
            if (result.IsOk)
            {
                var r = result.Value!;
                Notice = $"Saved: {r.Added} added, {r.Corrected} corrected (history kept), {r.Unchanged} unchanged.";
                return RedirectToPage(new { id = Id });
            }
            ImportErrors.AddRange(result.Errors.SelectMany(e => e.Value.Select(m => e.Key.StartsWith("row[", StringComparison.Ordinal) ? $"{RowLabel(e.Key)}: {m}" : m)));
            if (result.Message is { } msg && result.Kind != ResultKind.Invalid)
            {
                ImportErrors.Add(msg);
            }
        }
        ImportErrors.Insert(0, "Nothing was saved: fix these rows and try again.");
        return await OnGetAsync();
    }

    private static string RowLabel(string key) =>
        int.TryParse(key.AsSpan(4, key.IndexOf(']', StringComparison.Ordinal) - 4), out var i) ? $"Row {i + 1}" : key;

    private static readonly string[] PastedColumns = ["period", "value", "source"];

    /// <summary>
    /// Pasted rows may come without a header: add one when the first line does not name the columns,
    /// with as many of period, value and source as that line has fields (the reader wants every row
    /// to have the header's number of fields).
    /// </summary>
    private static string WithHeader(string text)
    {
        var first = text.TrimStart().Split('\n')[0].ToLowerInvariant();
        var sep = text.Contains('\t', StringComparison.Ordinal) ? "\t" : ",";
        var normalised = sep == "\t" ? text.Replace('\t', ',') : text;
        if (first.Contains("period", StringComparison.Ordinal))
        {
            return normalised;
        }
        var fields = first.TrimEnd('\r').Split(sep[0]).Length;
        return string.Join(',', PastedColumns.Take(Math.Clamp(fields, 2, 3))) + "\n" + normalised;
    }
}
