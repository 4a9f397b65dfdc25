namespace Tieflow.Simulator.Cli;

internal static class SimCli
{
    public static int Run(string[] args, TextWriter output, TextWriter error)
    {
        _ = args;
        _ = output;
        error.WriteLine("not yet");
        return 2;
    }
}
