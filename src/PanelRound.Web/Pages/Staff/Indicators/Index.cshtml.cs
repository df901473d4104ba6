using Microsoft.AspNetCore.Mvc;
using Microsoft.AspNetCore.Mvc.RazorPages;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Pages.Staff.Indicators;

[WritePolicy(AuthSetup.FacilitatorPolicy)]
public class IndexModel(PanelRoundDbContext db, IndicatorCatalog catalog) : PageModel
{
    public sealed class IndicatorForm
    {
        public string? Key { get; set; }

        public string? Name { get; set; }

        public string? UnitLabel { get; set; }

        public int? Decimals { get; set; }

        public string? Description { get; set; }
    }

    public sealed record Row(Indicator Indicator, int Observations, string? First, string? Last);

    [BindProperty]
    public IndicatorForm Input { get; set; } = new();

    public IReadOnlyList<Row> Rows { get; private set; } = [];

    public async Task OnGetAsync()
    {
        var indicators = await db.Indicators.AsNoTracking().OrderBy(i => i.Name).ToListAsync();
        var stats = await db.Observations.AsNoTracking().Where(o => o.SupersededAt == null).GroupBy(o => o.IndicatorId)
            .Select(g => new { g.Key, Count = g.Count(), Min = g.Min(o => o.PeriodSortKey), Max = g.Max(o => o.PeriodSortKey) }).ToListAsync();
        Rows = indicators.Select(i =>
        {
            var s = stats.FirstOrDefault(x => x.Key == i.Id);
            return new Row(i, s?.Count ?? 0, s is null ? null : Label(s.Min), s is null ? null : Label(s.Max));
        }).ToList();
    }

    private static string Label(int sortKey) => sortKey % 10 == 5 ? (sortKey / 10).ToString(System.Globalization.CultureInfo.InvariantCulture) : $"{sortKey / 10}Q{sortKey % 10}";

    public async Task<IActionResult> OnPostAsync() =>
        await this.AnswerAsync(
            await catalog.CreateIndicatorAsync(new IndicatorInput(Input.Key, Input.Name, Input.UnitLabel, Input.Decimals, Input.Description), Audit.ActorOf(User)),
            i => RedirectToPage("Details", new { id = i.Id }), OnGetAsync);
}
