namespace PanelRound.Web.Application.Scoring;

/// <summary>Track-record weights of a panel's members from their scored forecasts before a moment.</summary>
public sealed class TrackRecordWeightsService : IMemberWeights
{
    public Task<IReadOnlyDictionary<int, double>?> ForPanelAsync(int panelId, DateTime asOf) =>
        Task.FromResult<IReadOnlyDictionary<int, double>?>(null);
}
