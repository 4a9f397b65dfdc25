using System.Text.Json;
using Spectre.Console;
using Tieflow.Files;

namespace Tieflow.Service.Cli;

/// <summary>
/// Where a command writes: standard output (results, JSON) and standard error (problems, progress). Readable output
/// is never wrapped when it does not go to a terminal and carries no trailing spaces. With <see cref="Json"/> set,
/// problems go to standard error as one JSON object: <c>{ "error": { "file", "path", "message" }, "errors": [...], "exitCode" }</c>.
/// </summary>
internal sealed class CliContext
{
    /// <summary>Console width when output is not a terminal: wide enough that nothing is ever wrapped.</summary>
    public const int UnwrappedWidth = 100_000;

    public CliContext(TextWriter output, TextWriter error)
    {
        Output = output;
        Error = error;
        bool terminal = ReferenceEquals(output, System.Console.Out) && !System.Console.IsOutputRedirected;
        Console = AnsiConsole.Create(new AnsiConsoleSettings
        {
            Out = new AnsiConsoleOutput(new TrimmingWriter(output)),
            Ansi = terminal ? AnsiSupport.Detect : AnsiSupport.No,
            ColorSystem = terminal ? ColorSystemSupport.Detect : ColorSystemSupport.NoColors,
            Interactive = InteractionSupport.No,
        });
        if (!terminal)
        {
            Console.Profile.Width = UnwrappedWidth;
        }
    }

    public TextWriter Output { get; }

    public TextWriter Error { get; }

    /// <summary>Console for readable tables on standard output.</summary>
    public IAnsiConsole Console { get; }

    /// <summary>Set when the command line asks for JSON: problems are then reported as JSON on standard error.</summary>
    public bool Json { get; set; }

    /// <summary>Reports problems of input files (exit 2): one line each, or one JSON object under <see cref="Json"/>.</summary>
    public void ReportProblems(IReadOnlyList<InputProblem> problems, int exitCode)
    {
        if (!Json)
        {
            foreach (InputProblem p in problems)
            {
                Error.WriteLine($"error: {p}");
            }

            return;
        }

        WriteErrorJson(problems.Select(p => ((string?)p.File, (string?)p.JsonPath, p.Message)).ToList(), exitCode);
    }

    /// <summary>Reports one failure; <paramref name="prefix"/> is the word of the text form (<c>error</c>, <c>failed</c>, <c>could not compute</c>).</summary>
    public void ReportFailure(string prefix, string message, int exitCode)
    {
        if (!Json)
        {
            Error.WriteLine($"{prefix}: {message}");
            return;
        }

        WriteErrorJson([(null, null, message)], exitCode);
    }

    private void WriteErrorJson(IReadOnlyList<(string? File, string? Path, string Message)> errors, int exitCode)
    {
        using var buffer = new MemoryStream();
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            w.WriteStartObject();
            w.WritePropertyName("error");
            WriteError(w, errors[0]);
            if (errors.Count > 1)
            {
                w.WriteStartArray("errors");
                foreach (var e in errors)
                {
                    WriteError(w, e);
                }

                w.WriteEndArray();
            }

            w.WriteNumber("exitCode", exitCode);
            w.WriteEndObject();
        }

        Error.WriteLine(System.Text.Encoding.UTF8.GetString(buffer.ToArray()));
    }

    private static void WriteError(Utf8JsonWriter w, (string? File, string? Path, string Message) e)
    {
        w.WriteStartObject();
        w.WriteString("file", e.File);
        w.WriteString("path", e.Path);
        w.WriteString("message", e.Message);
        w.WriteEndObject();
    }
}
