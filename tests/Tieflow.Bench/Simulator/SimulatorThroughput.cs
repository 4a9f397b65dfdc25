using System.Diagnostics;
using System.Globalization;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator;

namespace Tieflow.Bench.Simulator;

/// <summary>
/// Throughput of the plant simulator: a six-stage counter-current train (acetone, water, 1,1,2-trichloroethane tie
/// lines) at 1 s steps with 20 instruments and feed and solvent disturbances, history written to a CSV file as it
/// runs. Target: at least 50,000 simulated seconds per wall-clock second on one core (two simulated days under 4 s),
/// and memory flat in the length of the run (a quarter of the run and the whole run are compared).
/// <c>dotnet run -c Release --project tests/Tieflow.Bench -- simulator [hours]</c>.
/// </summary>
internal static class SimulatorThroughput
{
    public static int Run(double hours)
    {
        string root = FindRoot();
        SystemFile system = SystemFileReader.Load(Path.Combine(root, "config-samples", "acetone-water-tce.system.json"));
        string folder = Path.Combine(Path.GetTempPath(), "tieflow-bench-sim-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
        Directory.CreateDirectory(folder);
        try
        {
            // Warm-up (two hours, so that tiered compilation reaches its optimised code), then a quarter of the run, then the whole run.
            Measure(system, folder, 2, quiet: true);
            (double quarterRate, long quarterPeak, _) = Measure(system, folder, hours / 4, quiet: false);
            (double rate, long peak, long rows) = Measure(system, folder, hours, quiet: false);
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"six stages, 1 s steps, 20 instruments, {rows} history rows: {rate:F0} simulated s per CPU s ({hours * 3600 / rate:F2} s of one core for {hours} h); quarter run {quarterRate:F0}"));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"peak working set {quarterPeak / 1e6:F1} MB after {hours / 4} h, {peak / 1e6:F1} MB after {hours} h"));
            return rate >= 50_000 ? 0 : 1;
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }

    private static (double Rate, long PeakWorkingSet, long Rows) Measure(SystemFile system, string folder, double hours, bool quiet)
    {
        Scenario scenario = Scenario(system, TimeSpan.FromHours(hours));
        string path = Path.Combine(folder, "history.csv");
        TimeSpan cpuBefore = Process.GetCurrentProcess().TotalProcessorTime;
        long allocatedBefore = GC.GetAllocatedBytesForCurrentThread();
        var stopwatch = Stopwatch.StartNew();
        long rows;
        using (var sink = new HistorySink(HistoryCsvWriter.Create(path)))
        {
            var simulation = new PlantSimulation(scenario);
            while (!simulation.Finished)
            {
                simulation.Step(sink);
            }

            rows = sink.Writer.Count;
        }

        stopwatch.Stop();
        double allocatedPerStep = (GC.GetAllocatedBytesForCurrentThread() - allocatedBefore) / (hours * 3600);
        using var process = Process.GetCurrentProcess();
        double cpu = (process.TotalProcessorTime - cpuBefore).TotalSeconds;

        // On a machine shared with other work the wall clock measures the neighbours; the process's CPU time is the
        // cost on one core (the simulation is single-threaded). Both are printed; the CPU rate is checked.
        double rate = hours * 3600 / cpu;
        if (!quiet)
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{hours} h simulated in {stopwatch.Elapsed.TotalSeconds:F2} s wall, {cpu:F2} s CPU: {hours * 3600 / stopwatch.Elapsed.TotalSeconds:F0} simulated s per wall s, {rate:F0} per CPU s; history {new FileInfo(path).Length / 1e6:F0} MB; GC heap {GC.GetTotalMemory(false) / 1e6:F1} MB; allocated {allocatedPerStep:F0} bytes per step"));
        }

        return (rate, process.PeakWorkingSet64, rows);
    }

    private static Scenario Scenario(SystemFile system, TimeSpan duration)
    {
        const int Stages = 6;
        var instruments = new List<Instrument>
        {
            Flow("FI-601", UnitStream.Feed),
            Flow("FI-602", UnitStream.Solvent),
            Flow("FI-603", UnitStream.RaffinateOf(Stages)),
            Flow("FI-604", UnitStream.ExtractOf(1)),
        };
        for (int n = 1; n <= Stages; n++)
        {
            instruments.Add(Analyzer($"AI-61{n}", UnitStream.RaffinateOf(n), ComponentRole.Solute, n - 1));
            instruments.Add(Analyzer($"AI-62{n}", UnitStream.ExtractOf(n), ComponentRole.Solute, n - 1));
        }

        instruments.Add(Analyzer("AI-631", UnitStream.ExtractOf(1), ComponentRole.Diluent, 0));
        instruments.Add(Analyzer("AI-632", UnitStream.RaffinateOf(Stages), ComponentRole.Solvent, 1));
        instruments.Add(Temperature("TI-601", 1));
        instruments.Add(Temperature("TI-606", Stages));
        var unit = new UnitDescription
        {
            Id = "X600",
            Kind = UnitKind.MixerSettler,
            SystemName = system.Name,
            System = system.System,
            Equilibrium = system.Model,
            Arrangement = CascadeArrangement.Countercurrent,
            Stages = Stages,
            Nominal = new NominalOperation(new MaterialStream(1000, new Ternary(0.3, 0.7, 0)), new MaterialStream(450, new Ternary(0, 0, 1)), 298.15, [0.92, 0.9, 0.9, 0.9, 0.9, 0.88]),
            Holdup = new Holdup(450, 1800),
            RaffinateSoluteSpec = 0.02,
            Instruments = instruments,
            Labs = [new LabPoint(UnitStream.RaffinateOf(Stages), ComponentRole.Solute)],
        };

        // Feed and solvent move every few hours, so that the train is in transient most of the time.
        var disturbances = new List<Disturbance>();
        for (int h = 2; h < duration.TotalHours; h += 5)
        {
            disturbances.Add(new Disturbance(DisturbanceKind.FeedFlow, null, TimeSpan.FromHours(h), h % 2 == 0 ? 1080 : 950, TimeSpan.FromMinutes(30)));
            disturbances.Add(new Disturbance(DisturbanceKind.SolventFlow, null, TimeSpan.FromHours(h + 1), h % 2 == 0 ? 470 : 440, TimeSpan.FromMinutes(20)));
        }

        return new Scenario
        {
            Plant = new PlantDescription("Brackenmoor", [unit]),
            Start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero),
            Duration = duration,
            Step = TimeSpan.FromSeconds(1),
            Seed = 11,
            Disturbances = disturbances,
            Faults = [new Fault { Kind = FaultKind.StageEfficiency, Stage = 3, Start = TimeSpan.FromHours(10), Ramp = TimeSpan.FromHours(2), Value = 0.6 }],
            Lab = new LabSchedule(TimeSpan.FromHours(4), TimeSpan.FromMinutes(90), 0.0005),
        };
    }

    private static Instrument Flow(string tag, UnitStream stream) => new()
    {
        Tag = tag, Node = $"ns=2;s=X600.{tag}", Quantity = InstrumentQuantity.Flow, Stream = stream,
        Unit = new EngineeringUnit("kg/h", 1, 0), Sigma = 5, RangeLow = 0, RangeHigh = 3000,
    };

    private static Instrument Analyzer(string tag, UnitStream stream, ComponentRole component, int offsetMinutes) => new()
    {
        Tag = tag, Node = $"ns=2;s=X600.{tag}", Quantity = InstrumentQuantity.Fraction, Stream = stream, Component = component,
        Unit = new EngineeringUnit("percent", 0.01, 0), Sigma = 0.05, Resolution = 0.01, RangeLow = 0, RangeHigh = 100,
        DeadTime = TimeSpan.FromMinutes(4), UpdateInterval = TimeSpan.FromMinutes(6), UpdateOffset = TimeSpan.FromMinutes(offsetMinutes % 6),
    };

    private static Instrument Temperature(string tag, int stage) => new()
    {
        Tag = tag, Node = $"ns=2;s=X600.{tag}", Quantity = InstrumentQuantity.Temperature, Stage = stage,
        Unit = new EngineeringUnit("degC", 1, 273.15), Sigma = 0.2, RangeLow = 0, RangeHigh = 100,
    };

    private static string FindRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "Monitor.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("Monitor.sln not found");
    }

    private sealed class HistorySink(HistoryCsvWriter writer) : ISimulationSink, IDisposable
    {
        public HistoryCsvWriter Writer { get; } = writer;

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample)
        {
            if (!NoWrite)
            {
                Writer.Write(sample);
            }
        }

        // BENCH_NOWRITE=1 measures the model alone.
        private static readonly bool NoWrite = Environment.GetEnvironmentVariable("BENCH_NOWRITE") == "1";

        public void OnLabResult(LabResult result)
        {
        }

        public void OnTruth(UnitDescription unit, TruthSample sample)
        {
        }

        public void Dispose() => Writer.Dispose();
    }
}
