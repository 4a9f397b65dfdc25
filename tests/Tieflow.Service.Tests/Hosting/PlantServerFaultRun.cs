using System.Diagnostics;
using System.Globalization;
using Tieflow.Service.Tests.Sources;
using Tieflow.Storage.Sqlite;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// <c>tieflow run</c> subscribed to the simulator over OPC UA while the server suffers a fault a number of times (the
/// restart and freeze tests). The plant runs at 240 times real time (a 30-minute window every 7.5 s) and is sampled
/// every 50 ms, the server's shortest interval: 12 s of plant time between readings, well inside the staleness limit
/// of the signal checks (3 update intervals of 10 s), so that a window after a gap is complete whatever the phase of
/// the sampling. Before each fault the run has closed two more windows and, after a gap, a window that lies wholly
/// after it. Every time the monitor must record the gap as a raised and cleared <c>source-gap</c> alert later in plant
/// time, resume, and close windows after it that are complete: every stream of X300 reconciled, as in the last window
/// before the first gap. Every wait is on an event with a generous limit; the figures go to the test output.
/// </summary>
internal static class PlantServerFaultRun
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(120);
    private static readonly TimeSpan Window = TimeSpan.FromMinutes(30);

    /// <summary>
    /// A fault of the server serving <paramref name="scenario"/> on <paramref name="port"/>: it makes the server go
    /// away, calls <paramref name="awaitGap"/> (which returns once the monitor has raised the gap), brings the server
    /// back and returns the process that serves now.
    /// </summary>
    public delegate Task<SimulatorProcess> Fault(SimulatorProcess sim, string scenario, int port, Action awaitGap);

    public static async Task RunAsync(TempFolder folder, ITestOutputHelper log, string name, int faults, Func<string, int, Task<SimulatorProcess>> start, Fault fault)
    {
        string plant = ServedScenario.Plant;
        string scenario = ServedScenario.Write(folder, TimeSpan.FromDays(7));
        int port = SimulatorProcess.FreePort();
        string store = Path.Combine(folder.Path, "site.db");
        string settings = folder.Write("site.settings.json", $$"""
            { "Tieflow": {
                "Plant": "{{plant}}",
                "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://127.0.0.1:{{port}}", "Security": "None",
                            "SamplingInterval": "00:00:00.050", "PublishingInterval": "00:00:00.200", "KeepAliveInterval": "00:00:01" },
                "Store": { "Kind": "sqlite", "Path": "{{store.Replace("\\", "/", StringComparison.Ordinal)}}" },
                "Health": { "Enabled": false } } }
            """);

        var clock = Stopwatch.StartNew();
        var closedBeforeFault = new List<HashSet<DateTimeOffset>>();
        long? peakRss;
        SimulatorProcess sim = await start(scenario, port);
        try
        {
            using var run = new TieflowProcess(folder.Path, null, "run", "--settings", settings);
            for (int f = 1; f <= faults; f++)
            {
                // Connected (the first time, or again after the last gap), a few plant hours of windows, and after a
                // gap a window wholly after it.
                Assert.True(run.WaitUntil(() => Count(run.Error, "connected at") >= f, Patience), $"{name} {f}: not connected: {run.Error}");
                int windows = UnitWindows(store).Count;
                if (f > 1)
                {
                    Assert.True(run.WaitUntil(() => WindowAfterGap(store, f - 1), Patience), $"{name} {f}: no window wholly after gap {f - 1}: {run.Error}");
                }

                HashSet<DateTimeOffset> closed = [];
                Assert.True(run.WaitUntil(() => (closed = UnitWindows(store)).Count >= windows + 2, Patience), $"{name} {f}: no windows closed: {run.Error}");
                closedBeforeFault.Add(closed);
                TimeSpan at = clock.Elapsed;
                sim = await fault(sim, scenario, port, () => Assert.True(run.WaitUntil(() => Count(run.Error, "Alert raised on X300: source-gap") >= f, Patience), $"{name} {f}: the gap was not raised: {run.Error}"));
                TimeSpan back = clock.Elapsed;
                Assert.True(run.WaitUntil(() => Count(run.Error, "Alert cleared on X300: source-gap") >= f, Patience), $"{name} {f}: the gap did not clear: {run.Error}\n{sim.Errors}");
                log.WriteLine($"{name} {f}: at {at.TotalSeconds:F0} s, server away {(back - at).TotalSeconds:F1} s, gap cleared {(clock.Elapsed - back).TotalSeconds:F1} s after it came back, monitor RSS {SoakSize.RssKib(run.Id) / 1024} MB");
            }

            // Windows close after the last gap too: wait for three more, the last two wholly after it.
            int before = UnitWindows(store).Count;
            Assert.True(run.WaitUntil(() => UnitWindows(store).Count >= before + 3 && WindowAfterGap(store, faults), Patience), $"no windows after the last gap: {run.Error}");
            peakRss = SoakSize.PeakRssKib(run.Id);
            run.Terminate();
            Assert.Equal(0, run.WaitForExit(Patience));
        }
        finally
        {
            sim.Dispose();
        }

        using SqliteStoreReader reader = SqliteStoreReader.Open(store);
        Assert.Equal("ok", reader.IntegrityCheck());
        var gaps = reader.ReadMeasurement("tieflow_alert").Where(p => p.Tag("kind") == "source-gap" && p.Tag("unit") == "X300").OrderBy(p => p.Time).ToList();
        var raised = gaps.Where(p => Active(p) == 1).ToList();
        var cleared = gaps.Where(p => Active(p) == 0).ToList();
        Assert.True(raised.Count == faults && cleared.Count == faults, $"{raised.Count} raised and {cleared.Count} cleared after {faults} faults:\n" + string.Join("\n", gaps));

        // Plant time never went back: each gap clears later than it was raised, and the next one is raised later still.
        for (int g = 0; g < faults; g++)
        {
            Assert.True(cleared[g].Time > raised[g].Time, $"gap {g + 1}: cleared at {cleared[g].Time:u}, raised at {raised[g].Time:u}");
            if (g > 0)
            {
                Assert.True(raised[g].Time > cleared[g - 1].Time, $"gap {g + 1} raised at {raised[g].Time:u}, before the last one cleared at {cleared[g - 1].Time:u}");
            }
        }

        // Every window was closed once, in time order; after each gap, the windows that lie wholly after it and were
        // closed before the next fault (after the last gap: all of them) are complete.
        var units = reader.ReadMeasurement("tieflow_unit").Where(p => p.Tag("unit") == "X300").Select(p => p.Time).ToList();
        Assert.Equal(units.Count, units.Distinct().Count());
        var streams = reader.ReadMeasurement("tieflow_stream").Where(p => p.Tag("unit") == "X300").GroupBy(p => p.Time).ToDictionary(g => g.Key, g => g.Count());
        var first = units.Where(t => t < raised[0].Time).ToList();
        Assert.NotEmpty(first);
        int complete = streams.GetValueOrDefault(first[^1]);
        Assert.True(complete > 0, "no reconciled streams before the first gap");
        string Diagnose() => string.Join("\n", reader.ReadMeasurement("tieflow_alert").Where(p => p.Time >= raised[0].Time).OrderBy(p => p.Time)
            .Select(p => $"{p.Time:u} {p.Tag("kind")} {p.Tag("tag")} {Active(p)} {p.Field("message")}"))
            + "\nstreams: " + string.Join(", ", streams.OrderBy(kv => kv.Key).Select(kv => $"{kv.Key:MM-dd HH:mm}={kv.Value}"))
            + "\nunits: " + string.Join(", ", units.Select(t => $"{t:MM-dd HH:mm}"));
        var checkedAfter = new List<int>();
        for (int g = 0; g < faults; g++)
        {
            DateTimeOffset gapEnd = cleared[g].Time;
            var after = units.Where(t => t - Window >= gapEnd && (g == faults - 1 || closedBeforeFault[g + 1].Contains(t))).ToList();
            Assert.True(after.Count > 0, $"gap {g + 1} (cleared {gapEnd:u}): no window wholly after it\n{Diagnose()}");
            Assert.All(after, t => Assert.True(complete == streams.GetValueOrDefault(t), $"gap {g + 1}, window {t:u}: {streams.GetValueOrDefault(t)} of {complete} streams reconciled\n{Diagnose()}"));
            checkedAfter.Add(after.Count);
        }

        log.WriteLine($"{name}: {faults} faults in {clock.Elapsed.TotalMinutes:F1} min; gaps raised {raised.Count}, cleared {cleared.Count}, plant time {(cleared[^1].Time - raised[0].Time).TotalHours:F1} h from the first to the last; "
            + $"{units.Count} windows, {first.Count} before the first gap; complete windows wholly after each gap ({complete} streams each): {string.Join(" ", checkedAfter)}; "
            + $"integrity ok; monitor peak RSS {(peakRss is long kib ? $"{kib / 1024} MB" : "not measurable")}");
    }

    private static double Active(StoredPoint p) => Convert.ToDouble(p.Field("active"), CultureInfo.InvariantCulture);

    /// <summary>The times of X300's windows in the store so far (none while the store is not there yet or busy).</summary>
    private static HashSet<DateTimeOffset> UnitWindows(string store) => Read(store, r => r.ReadMeasurement("tieflow_unit").Where(p => p.Tag("unit") == "X300").Select(p => p.Time).ToHashSet(), []);

    /// <summary>Whether the store holds gap <paramref name="gap"/> (1-based) as cleared and a window of X300 wholly after it.</summary>
    private static bool WindowAfterGap(string store, int gap) => Read(store, r =>
    {
        var cleared = r.ReadMeasurement("tieflow_alert").Where(p => p.Tag("kind") == "source-gap" && p.Tag("unit") == "X300" && Active(p) == 0).Select(p => p.Time).Order().ToList();
        return cleared.Count >= gap && r.ReadMeasurement("tieflow_unit").Any(p => p.Tag("unit") == "X300" && p.Time - Window >= cleared[gap - 1]);
    }, false);

    private static T Read<T>(string store, Func<SqliteStoreReader, T> read, T otherwise)
    {
        if (!File.Exists(store))
        {
            return otherwise;
        }

        try
        {
            using SqliteStoreReader reader = SqliteStoreReader.Open(store);
            return read(reader);
        }
        catch (Exception e) when (e is Microsoft.Data.Sqlite.SqliteException or IOException)
        {
            return otherwise;
        }
    }

    private static int Count(string text, string what)
    {
        int n = 0;
        for (int i = text.IndexOf(what, StringComparison.Ordinal); i >= 0; i = text.IndexOf(what, i + what.Length, StringComparison.Ordinal))
        {
            n++;
        }

        return n;
    }
}
