using System.CommandLine;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Options;
using Tieflow.Files;
using Tieflow.Service.Hosting;
using Tieflow.Service.Monitor;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow run [--settings FILE] [--store FILE] [--max-runtime DURATION]</c>: runs the monitor as a hosted service
/// until Ctrl+C, SIGTERM, the end of a simulated scenario, or the maximum run time; every stop is clean (exit 0). Bad
/// settings exit 2 with every problem listed by key path; a store or port that cannot be opened exits 3.
/// </summary>
internal static class RunCommand
{
    public static Command Create(CliContext context)
    {
        var settings = new Option<string?>("--settings") { Description = "Settings file (appsettings.json form, section Tieflow); without it the embedded demo: train X300 simulated at 60x real time", HelpName = "FILE" };
        var store = new Option<string?>("--store") { Description = "SQLite store to write, instead of the settings' store", HelpName = "FILE" };
        Option<TimeSpan?> maxRuntime = CommonOptions.OptionalDuration("--max-runtime", "Stop cleanly after this much wall-clock time (exit 0)");
        var command = new Command("run", "Runs the monitor (advisory, read-only towards the plant). Further settings as --Tieflow:KEY=VALUE.") { settings, store, maxRuntime };
        command.TreatUnmatchedTokensAsErrors = false;
        command.SetAction(parsed => CommandRunner.Run(context, () =>
        {
            IReadOnlyList<string> extra = parsed.UnmatchedTokens;
            if (extra.FirstOrDefault(t => !t.StartsWith("--", StringComparison.Ordinal) && !t.Contains('=', StringComparison.Ordinal) && !IsValueOfPrevious(extra, t)) is { } stray)
            {
                throw new CliUsageException($"unexpected argument '{stray}'; further settings are written --Tieflow:KEY=VALUE");
            }

            bool terminal = ReferenceEquals(context.Output, Console.Out) && !Console.IsOutputRedirected;
            var request = new RunRequest(parsed.GetValue(settings), parsed.GetValue(store), parsed.GetValue(maxRuntime), Directory.GetCurrentDirectory(), extra, context.Output, terminal);
            return Run(context, request);
        }));
        return command;
    }

    /// <summary>Runs the host for a request; returns the exit code. <paramref name="overrides"/> lets tests replace services (the clock, logging).</summary>
    public static int Run(CliContext context, RunRequest request, Action<IServiceCollection>? overrides = null, Action<IHost>? started = null)
    {
        if (request.SettingsFile is { } file && !File.Exists(Path.GetFullPath(file, request.WorkingDirectory)))
        {
            throw new InputException(file, "$", "the settings file does not exist");
        }

        using IHost host = TieflowHost.Build(request, overrides);
        var outcome = host.Services.GetRequiredService<RunOutcome>();
        try
        {
            host.StartAsync().GetAwaiter().GetResult();
        }
        catch (Exception e) when (SettingsFailures(e) is { Count: > 0 } failures)
        {
            foreach (string f in failures)
            {
                context.Error.WriteLine($"error: {f}");
            }

            context.Error.WriteLine($"{failures.Count} problem{(failures.Count == 1 ? string.Empty : "s")} in the settings; nothing was started.");
            return ExitCodes.BadInput;
        }
        catch (Exception) when (outcome.ExitCode != 0)
        {
            context.Error.WriteLine(outcome.Message);
            return outcome.ExitCode;
        }
        catch (IOException e)
        {
            // Typically the health port is taken.
            context.ReportFailure("failed", e.Message, ExitCodes.RuntimeFailure);
            return ExitCodes.RuntimeFailure;
        }

        started?.Invoke(host);
        host.WaitForShutdownAsync().GetAwaiter().GetResult();
        if (!request.Terminal)
        {
            ConsoleSummary.WriteFinal(request.Output, host.Services.GetRequiredService<MonitorStatus>().Current);
        }

        if (outcome.ExitCode != 0)
        {
            context.Error.WriteLine(outcome.Message);
        }

        return outcome.ExitCode;
    }

    private static bool IsValueOfPrevious(IReadOnlyList<string> tokens, string token)
    {
        int i = tokens.ToList().IndexOf(token);
        return i > 0 && tokens[i - 1].StartsWith("--", StringComparison.Ordinal) && !tokens[i - 1].Contains('=', StringComparison.Ordinal);
    }

    /// <summary>The validation failures of the options (each names its key path), from one failure or several.</summary>
    private static List<string> SettingsFailures(Exception e) => e switch
    {
        OptionsValidationException o => [.. o.Failures],
        AggregateException a when a.InnerExceptions.All(i => i is OptionsValidationException) => [.. a.InnerExceptions.SelectMany(i => ((OptionsValidationException)i).Failures)],
        _ => [],
    };
}
