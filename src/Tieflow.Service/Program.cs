using Tieflow.Service.Cli;

namespace Tieflow.Service;

/// <summary>Entry point of the <c>tieflow</c> executable: hands the command line to <see cref="CliApp"/>.</summary>
public static class Program
{
    public static int Main(string[] args) => CliApp.Run(args, Console.Out, Console.Error);
}
