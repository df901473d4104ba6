using PanelRound.Core.Statistics;

namespace PanelRound.Core.Tests;

public class ArchitectureTests
{
    private static readonly string[] ForbiddenPrefixes = ["Microsoft.EntityFrameworkCore", "Microsoft.AspNetCore"];

    [Fact]
    public void CoreAssembly_References_NoEntityFrameworkOrAspNetCore()
    {
        var assembly = typeof(Quantiles).Assembly;
        Assert.Equal("PanelRound.Core", assembly.GetName().Name);
        var references = assembly.GetReferencedAssemblies().Select(a => a.Name ?? "").ToArray();
        Assert.NotEmpty(references);
        var offending = references.Where(name => ForbiddenPrefixes.Any(p => name.StartsWith(p, StringComparison.Ordinal))).ToArray();
        Assert.Empty(offending);
    }

    [Fact]
    public void StatisticsTypes_AreSealedOrStatic()
    {
        var types = typeof(Quantiles).Assembly.GetExportedTypes()
            .Where(t => t.Namespace == "PanelRound.Core.Statistics" && t.IsClass);
        var open = types.Where(t => !t.IsSealed && !(t.IsAbstract && t.IsSealed)).Select(t => t.Name).ToArray();
        Assert.Empty(open);
    }
}
