using Tieflow.Simulator.Cli;

namespace Tieflow.Simulator;

/// <summary>Entry point of <c>tieflow-sim</c>.</summary>
public static class Program
{
    public static int Main(string[] args) => SimCli.Run(args, Console.Out, Console.Error);
}
