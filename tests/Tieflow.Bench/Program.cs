using BenchmarkDotNet.Running;

namespace Tieflow.Bench;

/// <summary>Runs the benchmarks chosen on the command line: <c>dotnet run -c Release --project tests/Tieflow.Bench -- --filter '*'</c>.</summary>
public static class Program
{
    public static void Main(string[] args) => BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
}
