using System.Runtime.CompilerServices;

namespace PanelRound.Web.Tests.Infrastructure;

/// <summary>Process-wide settings of the integration tests, applied before any host starts.</summary>
internal static class TestProcess
{
    /// <summary>
    /// Implementation note: every test host would otherwise watch its appsettings files, one
    /// inotify instance each; hundreds of hosts in one process reach the system's per-user limit
    /// (128 by default on Debian) and later hosts fail to start.
    /// </summary>
    [ModuleInitializer]
    internal static void Initialize() => Environment.SetEnvironmentVariable("DOTNET_hostBuilder__reloadConfigOnChange", "false");
}
