using Spectre.Console;

namespace Tieflow.Service.Cli;

/// <summary>Where a command writes: standard output (results, JSON) and standard error (problems, progress).</summary>
internal sealed class CliContext
{
    public CliContext(TextWriter output, TextWriter error)
    {
        Output = output;
        Error = error;
        Console = AnsiConsole.Create(new AnsiConsoleSettings
        {
            Out = new AnsiConsoleOutput(output),
            Ansi = ReferenceEquals(output, System.Console.Out) ? AnsiSupport.Detect : AnsiSupport.No,
            ColorSystem = ReferenceEquals(output, System.Console.Out) ? ColorSystemSupport.Detect : ColorSystemSupport.NoColors,
            Interactive = InteractionSupport.No,
        });
        // Redirected or captured output has no terminal width; tables of three components need about 100 columns.
        if (!ReferenceEquals(output, System.Console.Out) || System.Console.IsOutputRedirected)
        {
            Console.Profile.Width = 120;
        }
    }

    public TextWriter Output { get; }

    public TextWriter Error { get; }

    /// <summary>Console for readable tables on standard output.</summary>
    public IAnsiConsole Console { get; }
}
