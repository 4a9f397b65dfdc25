using System.CommandLine;

namespace Tieflow.Service.Cli;

/// <summary>Builds the command tree of <c>tieflow</c> and runs one command line.</summary>
internal static class CliApp
{
    public static int Run(string[] args, TextWriter output, TextWriter error)
    {
        var context = new CliContext(output, error) { Json = args.Contains("--json", StringComparer.Ordinal) };
        RootCommand root = Build(context);
        ParseResult parsed = root.Parse(args);
        if (parsed.Errors.Count > 0)
        {
            if (context.Json)
            {
                context.ReportFailure("error", string.Join("; ", parsed.Errors.Select(e => e.Message)) + "; run 'tieflow --help' (or add --help to a command) for usage", ExitCodes.BadInput);
                return ExitCodes.BadInput;
            }

            foreach (var e in parsed.Errors)
            {
                error.WriteLine($"error: {e.Message}");
            }

            error.WriteLine("Run 'tieflow --help' (or add --help to a command) for usage.");
            return ExitCodes.BadInput;
        }

        return parsed.Invoke(new InvocationConfiguration { Output = output, Error = error });
    }

    public static RootCommand Build(CliContext context)
    {
        var root = new RootCommand(
            "Tieflow: advisory monitoring and calculations for liquid-liquid extraction units. " +
            "Read-only towards the plant; not a safety system.");
        root.Subcommands.Add(RunCommand.Create(context));
        root.Subcommands.Add(CalcCommands.Create(context));
        root.Subcommands.Add(CheckCommand.Create(context));
        root.Subcommands.Add(DescribeCommand.Create(context));
        root.Subcommands.Add(UaCommands.Create(context));
        root.Subcommands.Add(ReplayCommand.Create(context));
        root.Subcommands.Add(ShowCommand.Create(context));
        return root;
    }
}
