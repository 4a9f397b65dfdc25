using System.Diagnostics;
using System.Globalization;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Monitoring.Signals;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Service.Replay;
using Tieflow.Simulator;

namespace Tieflow.Bench.Replay;

/// <summary>
/// Throughput of <c>tieflow replay</c> from CSV on the demo plant (config-samples/brackenmoor.plant.json), history
/// made by the simulator from a scenario of config-samples/scenarios. Where the time goes: parsing alone, parsing and
/// the signal checks, parsing and the reorder buffer, and the whole replay (checks, windows, reconciliation,
/// efficiencies, soft sensor, alerts), first cold (the JIT's work included) and then warm. Target: at least 2,000,000
/// history rows per CPU second on one core for the warm whole replay, and memory flat in the length of the history (a quarter of the history and the whole are compared).
/// <c>dotnet run -c Release --project tests/Tieflow.Bench -- replay [scenario|all]</c>; exit 1 below target.
/// </summary>
internal static class ReplayThroughput
{
    public const double TargetRowsPerSecond = 2_000_000;

    /// <summary>Bytes still in use after the last whole replay (a full collection, the runner and its result alive).</summary>
    private static long Retained { get; set; }

    public static int Run(string which)
    {
        string root = BenchPaths.Root();
        string[] scenarios = which == "all"
            ? [.. Directory.GetFiles(Path.Combine(root, "config-samples", "scenarios"), "*.scenario.json").Order(StringComparer.Ordinal)]
            : [Path.Combine(root, "config-samples", "scenarios", which.EndsWith(".json", StringComparison.Ordinal) ? which : which + ".scenario.json")];
        string folder = Path.Combine(Path.GetTempPath(), "tieflow-bench-replay-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
        Directory.CreateDirectory(folder);
        bool ok = true;
        try
        {
            foreach (string path in scenarios)
            {
                ok &= RunScenario(path, folder);
            }
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }

        return ok ? 0 : 1;
    }

    private static bool RunScenario(string scenarioPath, string folder)
    {
        Scenario scenario = ScenarioReader.Load(scenarioPath);
        PlantDescription plant = scenario.Plant;
        string quarterFile = Path.Combine(folder, "quarter.csv"), wholeFile = Path.Combine(folder, "whole.csv");
        IReadOnlyList<LabResult> quarterLabs = Simulate(scenario with { Duration = scenario.Duration / 4 }, quarterFile);
        IReadOnlyList<LabResult> labs = Simulate(scenario, wholeFile);
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{Path.GetFileName(scenarioPath)}: {scenario.Duration} at {scenario.Step} steps, {new FileInfo(wholeFile).Length / 1e6:F0} MB of history"));

        // The first whole replay in a process pays for the JIT: the methods of a window run once a window, and the
        // runtime recompiles them optimised (on another thread, counted in the process's CPU time) only after some
        // thirty calls. Reported, then the breakdown once the code is in its final form.
        Report("whole replay, cold", () => Full(plant, wholeFile, labs));
        Report("parse only", () => ParseOnly(wholeFile));
        Report("parse + signal checks", () => ParseAndCheck(plant, wholeFile));
        Report("parse + reorder buffer", () => ParseAndReorder(plant, wholeFile));
        (long quarterRows, long quarterHeap, _) = Full(plant, quarterFile, quarterLabs);
        long quarterRetained = Retained;
        (double rate, long heap, long peak) = Report("whole replay", () => Full(plant, wholeFile, labs));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  memory: GC heap at most {quarterHeap / 1e6:F1} MB for {quarterRows:N0} rows, {heap / 1e6:F1} MB for four times as many; in use at the end {quarterRetained / 1e6:F1} MB and {Retained / 1e6:F1} MB; peak working set {peak / 1e6:F1} MB"));
        bool flat = heap <= (1.5 * quarterHeap) + 16e6;
        bool fast = rate >= TargetRowsPerSecond;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  target {TargetRowsPerSecond:N0} rows per CPU s: {(fast ? "met" : "NOT met")}; memory flat: {(flat ? "yes" : "NO")}"));
        return fast && flat;
    }

    private static (double Rate, long Heap, long Peak) Report(string what, Func<(long Rows, long Heap, long Records)> run)
    {
        using var process = Process.GetCurrentProcess();
        TimeSpan cpuBefore = process.TotalProcessorTime;
        var stopwatch = Stopwatch.StartNew();
        (long rows, long heap, long records) = run();
        stopwatch.Stop();
        process.Refresh();
        double cpu = (process.TotalProcessorTime - cpuBefore).TotalSeconds;
        double rate = rows / cpu;

        // On a machine shared with other work the wall clock measures the neighbours; the process's CPU time is the
        // cost on one core (the replay is single-threaded; the GC's own threads are counted too).
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  {what,-24} {rows:N0} rows in {cpu:F2} s CPU ({stopwatch.Elapsed.TotalSeconds:F2} s wall): {rate:N0} rows per CPU s, {1e9 * cpu / rows:F0} ns per row{(records > 0 ? $", {records:N0} records" : string.Empty)}"));
        return (rate, heap, process.PeakWorkingSet64);
    }

    private static (long, long, long) ParseOnly(string file)
    {
        long rows = 0;
        double sum = 0;
        foreach (SignalSample s in HistoryCsvReader.Open(file))
        {
            rows++;
            sum += s.Value;
        }

        return (rows, GC.GetTotalMemory(false), double.IsNaN(sum) ? 1 : 0);
    }

    private static (long, long, long) ParseAndCheck(PlantDescription plant, string file)
    {
        var checkers = new Dictionary<string, SignalChecker>(StringComparer.Ordinal);
        foreach (Instrument i in plant.Units.SelectMany(u => u.Instruments))
        {
            checkers[i.Tag] = new SignalChecker(i);
        }

        long rows = 0, used = 0;
        foreach (SignalSample s in HistoryCsvReader.Open(file))
        {
            rows++;
            if (checkers.TryGetValue(s.Tag, out SignalChecker? c) && c.Check(s).Used)
            {
                used++;
            }
        }

        return (rows, GC.GetTotalMemory(false), used == -1 ? 1 : 0);
    }

    private static (long, long, long) ParseAndReorder(PlantDescription plant, string file)
    {
        var ranks = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (Instrument i in plant.Units.SelectMany(u => u.Instruments))
        {
            ranks.TryAdd(i.Tag, ranks.Count);
        }

        var buffer = new ReorderBuffer(ReplayRunner.DefaultReorderWindow);
        long rows = 0, released = 0;
        foreach (SignalSample s in HistoryCsvReader.Open(file))
        {
            rows++;
            buffer.Add(s, ranks.TryGetValue(s.Tag, out int rank) ? rank : -1);
            while (buffer.TryRelease(out _))
            {
                released++;
            }
        }

        return (rows, GC.GetTotalMemory(false), released == -1 ? 1 : 0);
    }

    private static (long Rows, long Heap, long Records) Full(PlantDescription plant, string file, IReadOnlyList<LabResult> labs)
    {
        long heap = 0, batches = 0;
        void Sink(IReadOnlyList<MonitorRecord> batch)
        {
            if ((++batches & 0xFF) == 0)
            {
                heap = Math.Max(heap, GC.GetTotalMemory(false));
            }
        }

        var runner = new ReplayRunner(plant);
        ReplayResult result = runner.Run(HistoryCsvReader.Open(file), labs, Sink);
        heap = Math.Max(heap, GC.GetTotalMemory(false));
        Retained = GC.GetTotalMemory(forceFullCollection: true);
        GC.KeepAlive(runner);
        return (result.Rows, heap, result.Records);
    }

    private static List<LabResult> Simulate(Scenario scenario, string history)
    {
        var sink = new FileSink(history);
        var simulation = new PlantSimulation(scenario);
        using (sink)
        {
            while (!simulation.Finished)
            {
                simulation.Step(sink);
            }
        }

        return sink.Labs;
    }

    private sealed class FileSink(string history) : ISimulationSink, IDisposable
    {
        private readonly HistoryCsvWriter _writer = HistoryCsvWriter.Create(history);

        public List<LabResult> Labs { get; } = [];

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample) => _writer.Write(sample);

        public void OnLabResult(LabResult result) => Labs.Add(result);

        public void OnTruth(UnitDescription unit, TruthSample sample)
        {
        }

        public void Dispose() => _writer.Dispose();
    }
}
