using Tieflow.Service.Cli;

namespace Tieflow.Service.Tests;

/// <summary>Runs the command line in process and captures what it prints.</summary>
internal sealed record CliRun(int ExitCode, string Output, string Error)
{
    public static CliRun Of(params string[] args)
    {
        using var output = new StringWriter();
        using var error = new StringWriter();
        int code = CliApp.Run(args, output, error);
        return new CliRun(code, output.ToString(), error.ToString());
    }
}
