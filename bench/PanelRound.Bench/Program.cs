using BenchmarkDotNet.Running;

namespace PanelRound.Bench;

/// <summary>dotnet run -c Release --project bench/PanelRound.Bench -- --filter '*'</summary>
public static class BenchProgram
{
    public static void Main(string[] args) => BenchmarkSwitcher.FromAssembly(typeof(BenchProgram).Assembly).Run(args);
}
