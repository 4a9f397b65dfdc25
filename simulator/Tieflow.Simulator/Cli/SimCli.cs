using System.CommandLine;
using System.Globalization;
using System.Net;
using Tieflow.Core.Cascade;
using Tieflow.Core.Equilibrium;
using Tieflow.Files;
using Tieflow.Core.Dynamics;

namespace Tieflow.Simulator.Cli;

/// <summary>The command line of <c>tieflow-sim</c> and the one place where exceptions become exit codes (0, 1, 2, 3 as for tieflow).</summary>
internal static class SimCli
{
    public const int Success = 0;
    public const int ComputationFailed = 1;
    public const int BadInput = 2;
    public const int RuntimeFailure = 3;

    public static int Run(string[] args, TextWriter output, TextWriter error) => RunAsync(args, output, error, TimeProvider.System).GetAwaiter().GetResult();

    public static async Task<int> RunAsync(string[] args, TextWriter output, TextWriter error, TimeProvider time)
    {
        var root = new RootCommand("tieflow-sim: a simulated liquid-liquid extraction plant with injected faults, for testing and training Tieflow.");
        root.Subcommands.Add(RunCommand(error, time));
        ParseResult parsed = root.Parse(args);
        if (parsed.Errors.Count > 0)
        {
            foreach (var e in parsed.Errors)
            {
                error.WriteLine($"error: {e.Message}");
            }

            error.WriteLine("Run 'tieflow-sim --help' (or add --help to a command) for usage.");
            return BadInput;
        }

        return await parsed.InvokeAsync(new InvocationConfiguration { Output = output, Error = error }).ConfigureAwait(false);
    }

    private static Command RunCommand(TextWriter error, TimeProvider time)
    {
        Option<string> scenario = new("--scenario") { Description = "The scenario file", HelpName = "FILE", Required = true };
        Option<string?> history = new("--history") { Description = "History CSV to write (time,tag,value,quality)", HelpName = "FILE" };
        Option<string?> labs = new("--labs") { Description = "Lab CSV to write (sampled,reported,stream,component,value)", HelpName = "FILE" };
        Option<string?> truth = new("--truth") { Description = "Truth file to write (faults and the true state once a minute)", HelpName = "FILE" };
        Option<string?> serve = new("--serve") { Description = "Serve the instruments over OPC UA, e.g. opc.tcp://127.0.0.1:4841 (SecurityPolicy None, read-only)", HelpName = "URL" };
        Option<double?> speed = new("--speed") { Description = "Simulated time per wall-clock time (1 = real time; the default with --serve)", HelpName = "FACTOR" };
        Option<bool> fast = new("--as-fast-as-possible") { Description = "No pacing (the default without --serve)" };
        Option<string?> pki = new("--pki") { Description = "With --serve: a certificate store folder; the server gets its certificate in own/ and also offers the signed and encrypted endpoints", HelpName = "DIR" };
        Option<string?> anchor = new("--anchor")
        {
            Description = "Tie plant time to the wall clock: plant time = scenario start + speed x (now - TIME), TIME in UTC (2026-03-02T08:00:00Z). "
                + "A run restarted with the same anchor and speed resumes the same plant at the time its clock says (the steps due are simulated first), never back at the start",
            HelpName = "TIME",
        };
        var command = new Command("run", "Simulates the plant of a scenario and writes the history, lab results and truth, or serves the live values.")
        {
            scenario, history, labs, truth, serve, speed, fast, pki, anchor,
        };
        command.Validators.Add(result =>
        {
            if (result.GetValue(speed) is double s && result.GetValue(fast))
            {
                result.AddError("--speed and --as-fast-as-possible exclude each other; give one.");
            }

            if (result.GetValue(speed) is double f && !(f > 0 && double.IsFinite(f)))
            {
                result.AddError($"--speed must be a number above 0, found {f}.");
            }

            if (result.GetValue(pki) is not null && result.GetValue(serve) is null)
            {
                result.AddError("--pki secures the OPC UA server; it needs --serve.");
            }

            if (result.GetValue(anchor) is string at)
            {
                if (!TryAnchor(at, out _))
                {
                    result.AddError($"--anchor {at}: expected a UTC time such as 2026-03-02T08:00:00Z");
                }

                if (result.GetValue(fast) || (result.GetValue(speed) is null && result.GetValue(serve) is null))
                {
                    result.AddError("--anchor ties plant time to the wall clock; it needs a paced run (--speed, or --serve), not as fast as possible.");
                }
            }

            if (result.GetValue(serve) is string url && !TryEndpoint(url, out _, out string problem))
            {
                result.AddError($"--serve {url}: {problem}");
            }
        });
        command.SetAction(async (parsed, cancellationToken) =>
        {
            Uri? endpoint = parsed.GetValue(serve) is string url && TryEndpoint(url, out Uri? u, out _) ? u : null;
            double? pace = parsed.GetValue(fast) ? null : parsed.GetValue(speed) ?? (endpoint is null ? null : 1.0);
            var settings = new RunSettings(parsed.GetValue(scenario)!, parsed.GetValue(history), parsed.GetValue(labs), parsed.GetValue(truth), endpoint, pace) { Pki = parsed.GetValue(pki), Anchor = parsed.GetValue(anchor) is string at && TryAnchor(at, out DateTimeOffset t) ? t : null };
            return await Guard(error, () => RunHandler.RunAsync(settings, error, time, cancellationToken)).ConfigureAwait(false);
        });
        return command;
    }

    /// <summary>An anchor time: ISO 8601 with Z or an offset (taken as UTC when it has neither).</summary>
    internal static bool TryAnchor(string text, out DateTimeOffset anchor) =>
        DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out anchor)
        && text.Contains('T', StringComparison.Ordinal);

    internal static bool TryEndpoint(string text, out Uri? endpoint, out string problem)
    {
        endpoint = null;
        problem = string.Empty;
        if (!Uri.TryCreate(text, UriKind.Absolute, out Uri? uri) || uri.Scheme != "opc.tcp" || uri.Port <= 0)
        {
            problem = "expected opc.tcp://ADDRESS:PORT with an IP address (for example opc.tcp://127.0.0.1:4841)";
            return false;
        }

        if (uri.Host != "localhost" && !IPAddress.TryParse(uri.Host, out _))
        {
            problem = $"the host must be an IP address to listen on (or localhost), found \"{uri.Host}\"";
            return false;
        }

        endpoint = uri;
        return true;
    }

    private static async Task<int> Guard(TextWriter error, Func<Task<int>> handler)
    {
        try
        {
            return await handler().ConfigureAwait(false);
        }
        catch (InputException e)
        {
            foreach (InputProblem p in e.Problems)
            {
                error.WriteLine($"error: {p}");
            }

            return BadInput;
        }
        catch (ArgumentException e)
        {
            // The scenario reader checks the scenario against its plant; what it leaves, the simulation refuses here.
            error.WriteLine($"error: {e.Message}");
            return BadInput;
        }
        catch (Exception e) when (e is SimulationException or CascadeException or EquilibriumException or ArithmeticException)
        {
            error.WriteLine($"could not simulate: {e.Message}");
            return ComputationFailed;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or System.Net.Sockets.SocketException)
        {
            error.WriteLine($"failed: {e.Message}");
            return RuntimeFailure;
        }
        catch (Exception e)
        {
            // Last resort at the process boundary: a defect still ends with a message and a non-zero code.
            error.WriteLine($"internal error ({e.GetType().Name}): {e.Message}");
            return RuntimeFailure;
        }
    }
}
