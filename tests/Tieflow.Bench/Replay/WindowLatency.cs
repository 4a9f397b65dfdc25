using System.Diagnostics;
using System.Globalization;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator;

namespace Tieflow.Bench.Replay;

/// <summary>
/// Time to close one balance window of the demo plant (config-samples/brackenmoor.plant.json, every unit) through the
/// whole analysis: signal-state checks, reconciliation, efficiencies, solvent accounting, soft sensor and alerts. The
/// readings of a window are fed outside the measurement; the reading that closes a window is timed with the work it
/// triggers, by the wall clock per unit and by the thread's CPU time for the plant (the readings of one time stamp
/// together, which adds a few microseconds of plain readings). Target: under 1 ms of CPU per window of the plant on
/// average (by the wall clock where the thread's CPU time cannot be read).
/// <c>dotnet run -c Release --project tests/Tieflow.Bench -- window [scenario | six-stage]</c>; exit 1 above target.
/// <c>six-stage</c> runs a six-stage train (<see cref="SixStageTrain"/>) through the clean scenario's changes.
/// </summary>
internal static class WindowLatency
{
    public const double TargetMilliseconds = 1.0;

    // Bytes allocated by the readings that close each unit's windows, in the last measurement.
    private static readonly Dictionary<string, long> AllocatedBytes = new(StringComparer.Ordinal);

    public static int Run(string which)
    {
        string root = BenchPaths.Root();
        string temporary = Path.Combine(Path.GetTempPath(), "tieflow-bench-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(temporary);
        try
        {
            string path = which == "six-stage"
                ? SixStageTrain.Write(root, temporary)
                : Path.Combine(root, "config-samples", "scenarios", which.EndsWith(".json", StringComparison.Ordinal) ? which : which + ".scenario.json");
            return Run(which, ScenarioReader.Load(path));
        }
        finally
        {
            Directory.Delete(temporary, recursive: true);
        }
    }

    private static int Run(string which, Scenario scenario)
    {
        var samples = new Collector();
        var simulation = new PlantSimulation(scenario);
        while (!simulation.Finished)
        {
            simulation.Step(samples);
        }

        Measure(scenario.Plant, samples);
        (Dictionary<string, List<double>> byUnit, List<double> plantWindows, List<double> cpu) = Measure(scenario.Plant, samples);
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{which}: {samples.Count:N0} readings, {plantWindows.Count} windows of the plant"));
        foreach ((string unit, List<double> ms) in byUnit)
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  {unit,-6} wall {Stats(ms)}; {AllocatedBytes[unit] / 1024.0 / ms.Count:F0} KiB allocated per window"));
        }

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  plant  wall {Stats(plantWindows)}"));
        double mean = plantWindows.Average();
        if (ThreadCpu.Available && cpu.Count > 0)
        {
            // The plant's windows close at a few distinct readings; their CPU time over the windows of the plant.
            mean = cpu.Sum() / plantWindows.Count;
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  plant  CPU  {mean:F3} ms per window of the plant on average ({cpu.Count} readings that close windows: {Stats(cpu)})"));
        }

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"  target {TargetMilliseconds} ms per window of the plant on average: {(mean < TargetMilliseconds ? "met" : "NOT met")}"));
        return mean < TargetMilliseconds ? 0 : 1;
    }

    private static string Stats(List<double> ms)
    {
        double[] sorted = [.. ms.Order()];
        double P(double q) => sorted[Math.Min(sorted.Length - 1, (int)(q * sorted.Length))];
        return string.Create(CultureInfo.InvariantCulture, $"{sorted.Length} windows: mean {ms.Average():F3} ms, median {P(0.5):F3}, p95 {P(0.95):F3}, max {sorted[^1]:F3} ms");
    }

    private static (Dictionary<string, List<double>> ByUnit, List<double> Plant, List<double> Cpu) Measure(PlantDescription plant, Collector samples)
    {
        var analyzers = plant.Units.Select(u => new UnitAnalyzer(u)).ToArray();
        var byTag = new Dictionary<string, UnitAnalyzer>(StringComparer.Ordinal);
        foreach (UnitAnalyzer a in analyzers)
        {
            foreach (Instrument i in a.Model.Unit.Instruments)
            {
                byTag[i.Tag] = a;
            }
        }

        var byUnit = analyzers.ToDictionary(a => a.Model.Unit.Id, _ => new List<double>());
        AllocatedBytes.Clear();
        var output = new List<MonitorRecord>();
        var cpu = new List<double>();
        DateTimeOffset groupTime = DateTimeOffset.MinValue;
        double groupStart = 0;
        bool groupCloses = false;
        foreach (SignalSample s in samples.Samples())
        {
            if (s.Time != groupTime && ThreadCpu.Available)
            {
                double now = ThreadCpu.Milliseconds();
                if (groupCloses)
                {
                    cpu.Add(now - groupStart);
                }

                (groupTime, groupStart, groupCloses) = (s.Time, now, false);
            }

            UnitAnalyzer a = byTag[s.Tag];
            long bytes = GC.GetAllocatedBytesForCurrentThread();
            long t0 = Stopwatch.GetTimestamp();
            a.Add(s, output);
            long t1 = Stopwatch.GetTimestamp();
            if (output.Count > 0)
            {
                byUnit[a.Model.Unit.Id].Add(Stopwatch.GetElapsedTime(t0, t1).TotalMilliseconds);
                AllocatedBytes[a.Model.Unit.Id] = AllocatedBytes.GetValueOrDefault(a.Model.Unit.Id) + (GC.GetAllocatedBytesForCurrentThread() - bytes);
                output.Clear();
                groupCloses = true;
            }
        }

        // A window of the plant: every unit's n-th window.
        int n = byUnit.Values.Min(l => l.Count);
        var plantWindows = Enumerable.Range(0, n).Select(k => byUnit.Values.Sum(l => l[k])).ToList();
        if (groupCloses)
        {
            cpu.Add(ThreadCpu.Milliseconds() - groupStart);
        }

        return (byUnit, plantWindows, cpu);
    }

    /// <summary>
    /// The simulated readings, held without object references: a whole history of <see cref="SignalSample"/> (a tag
    /// string each) would make every full collection during the measurement mark millions of references, a cost of the
    /// benchmark's own store (100-400 ms in one window of the six-stage train) that a replay, which streams its history,
    /// never pays.
    /// </summary>
    private sealed class Collector : ISimulationSink
    {
        private readonly List<string> _tags = [];
        private readonly Dictionary<string, int> _tagIndex = new(StringComparer.Ordinal);
        private readonly List<Reading> _readings = [];

        public int Count => _readings.Count;

        public IEnumerable<SignalSample> Samples()
        {
            foreach (Reading r in _readings)
            {
                yield return new SignalSample(_tags[r.Tag], new DateTimeOffset(r.UtcTicks, TimeSpan.Zero), r.Value, r.Quality);
            }
        }

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample)
        {
            if (!_tagIndex.TryGetValue(sample.Tag, out int tag))
            {
                tag = _tags.Count;
                _tags.Add(sample.Tag);
                _tagIndex[sample.Tag] = tag;
            }

            _readings.Add(new Reading(tag, sample.Time.UtcTicks, sample.Value, sample.Quality));
        }

        public void OnLabResult(LabResult result)
        {
        }

        public void OnTruth(UnitDescription unit, TruthSample sample)
        {
        }

        private readonly record struct Reading(int Tag, long UtcTicks, double Value, SignalQuality Quality);
    }
}
