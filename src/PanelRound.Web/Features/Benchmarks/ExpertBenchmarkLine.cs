using Microsoft.EntityFrameworkCore;
using PanelRound.Data;

namespace PanelRound.Web.Features.Benchmarks;

/// <summary>The benchmark line of one question on the expert's chart.</summary>
public sealed record ExpertBenchmark(string Name, IReadOnlyList<BenchmarkPointDto> Path);

/// <summary>
/// The one benchmark the panel chose to show its experts, per question, when the panel's setting
/// "show a statistical benchmark to experts" is on (off by default). It is computed from the public
/// reference series only, so it reveals nothing about any expert.
/// </summary>
public sealed class ExpertBenchmarkLine(PanelRoundDbContext db, PanelBenchmarks benchmarks)
{
    public async Task<IReadOnlyDictionary<int, ExpertBenchmark>> ForPanelAsync(int panelId)
    {
        var settings = await db.Panels.AsNoTracking().Where(p => p.Id == panelId).Select(p => p.Settings).SingleOrDefaultAsync();
        if (settings is null || !settings.ShowBenchmarkToExperts || await benchmarks.BuildAsync(panelId) is not { } all)
        {
            return new Dictionary<int, ExpertBenchmark>();
        }
        return all.Questions
            .Select(q => (q.QuestionId, Benchmark: q.Benchmarks.FirstOrDefault(b => b.Method == settings.ExpertBenchmark && b.Available && b.Path.Count > 0)))
            .Where(x => x.Benchmark is not null)
            .ToDictionary(x => x.QuestionId, x => new ExpertBenchmark(x.Benchmark!.Name, x.Benchmark.Path));
    }
}
