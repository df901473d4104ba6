using System.Globalization;
using Microsoft.EntityFrameworkCore;
using PanelRound.Data;
using PanelRound.Data.Entities;
using PanelRound.Web.Features.Indicators;
using PanelRound.Web.Features.Results;
using PanelRound.Web.Infrastructure;

namespace PanelRound.Web.Features.Answers;

/// <summary>A panel as its experts' requests read it: its text, settings and questions (with their indicators), and the brief rendered.</summary>
/// <param name="Panel">Read-only and shared between requests; its rounds are not loaded (they change: read them per request).</param>
/// <param name="BriefHtml">The brief through the sanitiser.</param>
public sealed record PanelDefinition(Panel Panel, string BriefHtml);

/// <summary>
/// What an expert's request needs of a panel that no longer changes, kept in memory so that a
/// submission or a form reads from the database only what does change: the rounds, the expert's
/// own answers. Three things are kept: a panel's definition once it has left Draft (every edit is
/// refused after that); a closed round's frozen feedback; a panel's reference series.
/// </summary>
/// <remarks>
/// Implementation note: every key names the version of what it was read from, so an entry is never
/// used stale, on one instance or several (each keeps its own): the panel's <c>Version</c>
/// (changed by every edit and state change), a round's <c>Version</c> (changed when it closes), and
/// for the reference series the newest observation id as well (observations are only appended; a
/// correction is a new row). A definition read after its version changed underneath is used once, not kept.
/// </remarks>
public sealed class PanelDefinitions
{
    private readonly InputKeyedCache<PanelDefinition> _definitions = new(1024);
    private readonly InputKeyedCache<IReadOnlyList<FrozenFeedback>> _frozen = new(4096);
    private readonly InputKeyedCache<ILookup<int, SeriesPoint>> _references = new(1024);

    private static string Key(int id, Guid version) => string.Create(CultureInfo.InvariantCulture, $"{id}:{version:N}");

    /// <summary>The panel's definition at <paramref name="version"/> (as the request read it), from memory or else the database (then as it is now).</summary>
    public async Task<PanelDefinition> GetAsync(PanelRoundDbContext db, int panelId, Guid version)
    {
        var key = Key(panelId, version);
        if (_definitions.Find(key) is { } hit)
        {
            return hit;
        }
        var panel = await db.Panels.AsNoTracking().Include(p => p.Questions).ThenInclude(q => q.Indicator).SingleAsync(p => p.Id == panelId);
        var definition = new PanelDefinition(panel, Markdown.ToSafeHtml(panel.Brief));
        if (panel.Version == version && panel.State != PanelState.Draft)
        {
            _definitions.Add(key, definition);
        }
        return definition;
    }

    /// <summary>A round's frozen feedback, by its id and version; kept once the round is <paramref name="closed"/> (frozen then, and only then).</summary>
    public async Task<IReadOnlyList<FrozenFeedback>> FrozenAsync(PanelRoundDbContext db, int roundId, Guid version, bool closed)
    {
        var key = Key(roundId, version);
        if (_frozen.Find(key) is { } hit)
        {
            return hit;
        }
        var rows = await db.FrozenFeedback.AsNoTracking().Where(f => f.RoundId == roundId).ToListAsync();
        if (closed)
        {
            _frozen.Add(key, rows);
        }
        return rows;
    }

    /// <summary>The reference series of the panel's indicators (observations before its start), read when the catalog's newest observation is not <paramref name="catalogStamp"/>'s.</summary>
    public async Task<ILookup<int, SeriesPoint>> ReferencesAsync(PanelRoundDbContext db, PanelDefinition definition, int? catalogStamp)
    {
        var panel = definition.Panel;
        var key = string.Create(CultureInfo.InvariantCulture, $"{Key(panel.Id, panel.Version)}:{catalogStamp}");
        if (_references.Find(key) is { } hit)
        {
            return hit;
        }
        var series = await IndicatorCatalog.ReferenceSeriesAsync(db, panel.Questions.Select(q => q.IndicatorId).Distinct().ToList(), panel.StartsOn);
        _references.Add(key, series);
        return series;
    }
}
