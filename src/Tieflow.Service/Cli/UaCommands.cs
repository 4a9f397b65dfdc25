using System.CommandLine;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Service.Cli;

/// <summary>
/// The <c>ua</c> command group (docs/commands.md): an engineer's first check that Tieflow can see a plant's OPC UA
/// server. Read-only: browse, read and watch.
/// </summary>
internal static class UaCommands
{
    public static Command Create(CliContext context)
    {
        var ua = new Command("ua", "Checks an OPC UA server: browse its nodes, read values, watch data changes (read-only).");
        ua.Subcommands.Add(Browse(context));
        ua.Subcommands.Add(Read(context));
        ua.Subcommands.Add(Watch(context));
        return ua;
    }

    private static Option<string> Endpoint() => new("--endpoint") { Description = "Server endpoint URL, e.g. opc.tcp://host:4840/path", Required = true, HelpName = "URL" };

    private static Option<string?> User() => new("--user")
    {
        Description = "User name; the password is read from the environment variable " + UaSession.PasswordVariable,
        HelpName = "NAME",
    };

    private static Option<TimeSpan> ConnectTimeout() => CommonOptions.Duration("--connect-timeout",
        "One overall deadline for connecting, retries included, e.g. 10s or 00:00:30 (default 10s)", UaSession.DefaultConnectDeadline);

    private static Command Browse(CliContext context)
    {
        Option<string> endpoint = Endpoint();
        Option<string?> user = User();
        Option<string> node = new("--node") { Description = "Node to start from (default the Objects folder, i=85)", HelpName = "NODEID", DefaultValueFactory = _ => "i=85" };
        Option<int> depth = new("--depth") { Description = "Levels to descend (default 1)", HelpName = "N", DefaultValueFactory = _ => 1 };
        Option<bool> json = CommonOptions.Json();
        Option<TimeSpan> connectTimeout = ConnectTimeout();
        var command = new Command("browse", "Browses from a node: browse names, NodeIds, node classes and data types.") { endpoint, node, depth, user, json, connectTimeout };
        command.SetAction(parsed => Run(context, () => UaBrowseHandler.Run(context,
            UaSession.Settings(parsed.GetValue(endpoint)!, parsed.GetValue(user)) with { ConnectDeadline = parsed.GetValue(connectTimeout) },
            parsed.GetValue(node)!, parsed.GetValue(depth), parsed.GetValue(json))));
        return command;
    }

    private static Command Read(CliContext context)
    {
        Option<string> endpoint = Endpoint();
        Option<string?> user = User();
        Option<string[]> nodes = new("--node") { Description = "Node to read (repeat the option for several)", HelpName = "NODEID", Required = true, AllowMultipleArgumentsPerToken = false };
        Option<bool> json = CommonOptions.Json();
        Option<TimeSpan> connectTimeout = ConnectTimeout();
        var command = new Command("read", "Reads current values with their status and timestamps.") { endpoint, nodes, user, json, connectTimeout };
        command.SetAction(parsed => Run(context, () => UaReadHandler.Run(context,
            UaSession.Settings(parsed.GetValue(endpoint)!, parsed.GetValue(user)) with { ConnectDeadline = parsed.GetValue(connectTimeout) },
            parsed.GetValue(nodes)!, parsed.GetValue(json))));
        return command;
    }

    private static Command Watch(CliContext context)
    {
        Option<string> endpoint = Endpoint();
        Option<string?> user = User();
        Option<string[]> nodes = new("--node") { Description = "Node to watch (repeat the option for several)", HelpName = "NODEID", Required = true };
        Option<TimeSpan> sampling = CommonOptions.Duration("--sampling", "Sampling and publishing interval, e.g. 500ms, 1s or 00:00:01 (default 1s)", TimeSpan.FromSeconds(1));
        Option<TimeSpan?> duration = CommonOptions.OptionalDuration("--for", "Stop cleanly after this long, e.g. 30s, 15m, 2h or 01:30:00 (default: until Ctrl+C)");
        Option<bool> json = CommonOptions.Json();
        Option<TimeSpan> connectTimeout = ConnectTimeout();
        var command = new Command("watch", "Subscribes and prints each data change, reconnecting by itself if the server goes away.") { endpoint, nodes, sampling, duration, user, json, connectTimeout };
        command.SetAction(parsed => Run(context, () => UaWatchHandler.Run(context,
            UaSession.Settings(parsed.GetValue(endpoint)!, parsed.GetValue(user)) with { ConnectDeadline = parsed.GetValue(connectTimeout) },
            parsed.GetValue(nodes)!, parsed.GetValue(sampling), parsed.GetValue(duration), parsed.GetValue(json))));
        return command;
    }

    /// <summary>Maps the failures of the ua commands to their exit codes; everything else goes to <see cref="CommandRunner"/>.</summary>
    private static int Run(CliContext context, Func<int> handler) => CommandRunner.Run(context, () =>
    {
        try
        {
            return handler();
        }
        catch (UaCliException e)
        {
            context.ReportFailure(e.ExitCode == ExitCodes.BadInput ? "error" : "failed", e.Message, e.ExitCode);
            return e.ExitCode;
        }
        catch (ServiceResultException e)
        {
            // The server answered but refused the request (unknown node, access denied...).
            context.ReportFailure("failed", $"{e.Message} ({e.Status})", ExitCodes.RuntimeFailure);
            return ExitCodes.RuntimeFailure;
        }
    });
}
