using System.Globalization;
using BenchmarkDotNet.Running;
using Tieflow.Bench.OpcUa;
using Tieflow.Bench.Simulator;

namespace Tieflow.Bench;

/// <summary>Runs the benchmarks chosen on the command line: <c>dotnet run -c Release --project tests/Tieflow.Bench -- --filter '*'</c>.</summary>
public static class Program
{
    public static async Task<int> Main(string[] args)
    {
        if (args.Length > 0 && args[0] == "latency")
        {
            await NotificationLatencyProbe.RunAsync(args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 20);
            return 0;
        }

        if (args.Length > 0 && args[0] == "simulator")
        {
            return SimulatorThroughput.Run(args.Length > 1 ? double.Parse(args[1], CultureInfo.InvariantCulture) : 48);
        }

        if (args.Length > 0 && args[0] == "store")
        {
            await Storage.StoreProbe.RunAsync(args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 400_000);
            return 0;
        }

        if (args.Length > 0 && args[0] == "forward")
        {
            await Storage.ForwardingProbe.RunAsync(
                args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 300_000,
                args.Length > 2 ? int.Parse(args[2], CultureInfo.InvariantCulture) : 5000,
                args.Length > 3 ? int.Parse(args[3], CultureInfo.InvariantCulture) : new Tieflow.Storage.Outbox.OutboxForwarderOptions().MaxInFlight,
                args.Length <= 4 || args[4] switch { "gzip" => true, "nogzip" => false, _ => throw new ArgumentException($"forward: expected gzip or nogzip, found '{args[4]}'") });
            return 0;
        }

        if (args.Length > 0 && args[0] == "connect")
        {
            await SecuredConnectProbe.RunAsync(args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 20);
            return 0;
        }

        if (args.Length > 0 && args[0] == "scaling")
        {
            Reconciliation.TrainScalingProbe.Run(Console.Out);
            return 0;
        }

        if (args.Length > 0 && args[0] == "replay")
        {
            return Replay.ReplayThroughput.Run(args.Length > 1 ? args[1] : "clean");
        }

        if (args.Length > 0 && args[0] == "window")
        {
            return Replay.WindowLatency.Run(args.Length > 1 ? args[1] : "clean");
        }

        BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
        return 0;
    }
}
