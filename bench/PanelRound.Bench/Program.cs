using BenchmarkDotNet.Running;

// dotnet run -c Release --project bench/PanelRound.Bench -- --filter '*'
BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);

public partial class Program;
