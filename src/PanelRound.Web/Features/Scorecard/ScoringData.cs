using PanelRound.Core.Scoring;
using PanelRound.Data.Entities;

namespace PanelRound.Web.Features.Scorecard;

/// <summary>A concluded panel as the scorecard sees it.</summary>
/// <param name="Id">The panel's id.</param>
/// <param name="Key">The internal key the scored items carry (by panel id: imported and app panels never collide).</param>
/// <param name="DisplayKey">The key shown in pages and the API: the external (imported) key, else <c>panel-{id}</c>.</param>
/// <param name="Title">Its title.</param>
/// <param name="StartsOn">Its start: the reference series ends before it.</param>
/// <param name="ClosedOn">The day it concluded: only what was known before this day may shape its weights.</param>
/// <param name="FinalRound">Its last closed round, the one its consensus came from.</param>
/// <param name="Settings">Its consensus settings.</param>
/// <param name="Questions">Its questions.</param>
public sealed record ScoredPanel(
    int Id, string Key, string DisplayKey, string Title, DateOnly StartsOn, DateOnly ClosedOn, int FinalRound, PanelSettings Settings,
    IReadOnlyList<ScoredQuestion> Questions);

/// <summary>
/// A question of a concluded panel with its error scale and no-change forecast, both from the
/// reference series (the indicator's current observations ending before the panel's start).
/// </summary>
public sealed record ScoredQuestion(
    int Id, string Key, int IndicatorId, string IndicatorKey, string IndicatorName, string Label, string Unit, int Decimals,
    ResponseFormat Format, IReadOnlyList<string> Periods, ScaleResult Scale, double? NaiveForecast);

/// <summary>An expert on the roster.</summary>
/// <param name="Id">The expert's id.</param>
/// <param name="Key">The internal key the scored items carry (by expert id, so that no external key can collide with another expert's email).</param>
/// <param name="DisplayKey">The key shown in pages and the API: the external key, else the email.</param>
/// <param name="Name">The name (reviewer pages only).</param>
public sealed record ScoredExpert(int Id, string Key, string DisplayKey, string Name);

/// <summary>The current value of an indicator at a period and the day it was first known (over its whole correction history).</summary>
public sealed record OutcomeValue(double Value, DateOnly KnownOn, string? Source);

/// <summary>Everything the scorecard, the weights and the backtest compute from, loaded in a few bulk queries.</summary>
/// <param name="ExpertItems">The experts' counted answers of every closed round of every concluded panel that have an outcome.</param>
/// <param name="ConsensusItems">The published consensus of those panels that have an outcome (expert key <c>consensus</c>, final round).</param>
/// <param name="Panels">The concluded panels, by internal panel key.</param>
/// <param name="Experts">The experts behind the items, by internal expert key.</param>
/// <param name="Consensus">The published consensus entries of the concluded panels, with or without outcome.</param>
/// <param name="Outcomes">The current observations of the questions' indicators, by indicator id and period.</param>
public sealed record ScoringData(
    IReadOnlyList<ScoredItem> ExpertItems,
    IReadOnlyList<ScoredItem> ConsensusItems,
    IReadOnlyDictionary<string, ScoredPanel> Panels,
    IReadOnlyDictionary<string, ScoredExpert> Experts,
    IReadOnlyList<ConsensusEntry> Consensus,
    IReadOnlyDictionary<(int IndicatorId, string Period), OutcomeValue> Outcomes)
{
    public ScoredPanel? PanelById(int id) => Panels.Values.FirstOrDefault(p => p.Id == id);
}
