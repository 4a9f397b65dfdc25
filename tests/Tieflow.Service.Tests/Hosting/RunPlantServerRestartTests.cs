using System.Globalization;
using Tieflow.Service.Tests.Sources;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The monitor against a plant server that is stopped and started again three times while <c>tieflow run</c> is
/// subscribed. The simulator keeps its clock across the restarts (<c>tieflow-sim run --anchor</c>), so plant time
/// moves on over each down time: every time the monitor records the gap as a raised and cleared <c>source-gap</c>
/// alert later in plant time, resumes, and closes complete windows after it. The plant runs at 240 times real time (a
/// 30-minute window every 7.5 s) and is sampled every 50 ms, the server's shortest interval: 12 s of plant time
/// between readings, well inside the staleness limit of the signal checks (3 update intervals of 10 s), so that a
/// window after a gap is complete whatever the phase of the sampling; every wait is on an event with a generous limit.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunPlantServerRestartTests : IDisposable
{
    private const int Restarts = 3;
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(120);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task Run_PlantServerRestartedThreeTimes_RecordsEachGapAndResumesWithCompleteWindows()
    {
        string plant = Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json").Replace("\\", "/", StringComparison.Ordinal);
        string scenario = _folder.Write("served.scenario.json", $$"""
            { "plant": "{{plant}}", "start": "2026-03-02T00:00:00Z", "duration": "7.00:00:00", "step": "00:00:01", "seed": 5,
              "faults": [], "lab": { "interval": "04:00:00", "delay": "01:30:00", "sigma": 0.0005 } }
            """);
        int port = SimulatorProcess.FreePort();
        string store = Path.Combine(_folder.Path, "site.db");
        string settings = _folder.Write("site.settings.json", $$"""
            { "Tieflow": {
                "Plant": "{{plant}}",
                "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://127.0.0.1:{{port}}", "Security": "None",
                            "SamplingInterval": "00:00:00.050", "PublishingInterval": "00:00:00.200", "KeepAliveInterval": "00:00:01" },
                "Store": { "Kind": "sqlite", "Path": "{{store.Replace("\\", "/", StringComparison.Ordinal)}}" },
                "Health": { "Enabled": false } } }
            """);

        DateTimeOffset anchor = DateTimeOffset.UtcNow;
        SimulatorProcess sim = await SimulatorProcess.StartAsync(scenario, port, speed: 240, anchor: anchor);
        try
        {
            using var run = new TieflowProcess(_folder.Path, null, "run", "--settings", settings);
            for (int restart = 1; restart <= Restarts; restart++)
            {
                // Connected (the first time, or again after the last gap), and a few plant hours of windows.
                Assert.True(run.WaitUntil(() => Count(run.Error, "connected at") >= restart, Patience), $"restart {restart}: not connected: {run.Error}");
                int windows = CountUnitWindows(store);
                Assert.True(run.WaitUntil(() => CountUnitWindows(store) >= windows + 2, Patience), $"restart {restart}: no windows closed: {run.Error}");
                sim.Stop();
                sim.Dispose();
                Assert.True(run.WaitUntil(() => Count(run.Error, "Alert raised on X300: source-gap") >= restart, Patience), $"restart {restart}: the gap was not raised: {run.Error}");
                sim = await SimulatorProcess.StartAsync(scenario, port, speed: 240, anchor: anchor);
                Assert.True(run.WaitUntil(() => Count(run.Error, "Alert cleared on X300: source-gap") >= restart, Patience), $"restart {restart}: the gap did not clear: {run.Error}\n{sim.Errors}");
            }

            // Windows close after the last gap too: wait for two whole windows after it.
            int before = CountUnitWindows(store);
            Assert.True(run.WaitUntil(() => CountUnitWindows(store) >= before + 3, Patience), $"no windows after the last gap: {run.Error}");
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
        Assert.True(raised.Count == Restarts && cleared.Count == Restarts, string.Join("\n", gaps));

        // Plant time never went back: each gap clears later than it was raised, and the next one is raised later still.
        for (int g = 0; g < Restarts; g++)
        {
            Assert.True(cleared[g].Time > raised[g].Time, $"gap {g + 1}: cleared at {cleared[g].Time:u}, raised at {raised[g].Time:u}");
            if (g > 0)
            {
                Assert.True(raised[g].Time > cleared[g - 1].Time, $"gap {g + 1} raised at {raised[g].Time:u}, before the last one cleared at {cleared[g - 1].Time:u}");
            }
        }

        // Every window was closed once, in time order, and the windows that lie wholly after the last gap are complete:
        // every stream of X300 reconciled, as in the windows before the first gap.
        var units = reader.ReadMeasurement("tieflow_unit").Where(p => p.Tag("unit") == "X300").Select(p => p.Time).ToList();
        Assert.Equal(units.Count, units.Distinct().Count());
        var streams = reader.ReadMeasurement("tieflow_stream").Where(p => p.Tag("unit") == "X300").GroupBy(p => p.Time).ToDictionary(g => g.Key, g => g.Count());
        TimeSpan window = TimeSpan.FromMinutes(30);
        var first = units.Where(t => t < raised[0].Time).ToList();
        var last = units.Where(t => t - window >= cleared[^1].Time).ToList();
        Assert.NotEmpty(first);
        Assert.NotEmpty(last);
        int complete = streams[first[^1]];
        Assert.True(complete > 0, "no reconciled streams before the first gap");
        string Diagnose() => string.Join("\n", reader.ReadMeasurement("tieflow_alert").Where(p => p.Time >= raised[0].Time).OrderBy(p => p.Time)
            .Select(p => $"{p.Time:u} {p.Tag("kind")} {p.Tag("tag")} {Active(p)} {p.Field("message")}"))
            + "\nstreams: " + string.Join(", ", streams.OrderBy(kv => kv.Key).Select(kv => $"{kv.Key:HH:mm}={kv.Value}"))
            + "\nunits: " + string.Join(", ", units.Select(t => $"{t:HH:mm}"));
        Assert.All(last, t => Assert.True(complete == streams.GetValueOrDefault(t), $"{t:u}: {streams.GetValueOrDefault(t)} streams\n{Diagnose()}"));
    }

    private static double Active(StoredPoint p) => Convert.ToDouble(p.Field("active"), CultureInfo.InvariantCulture);

    /// <summary>Windows of X300 in the store so far (0 while the store is not there yet or busy).</summary>
    private static int CountUnitWindows(string store)
    {
        if (!File.Exists(store))
        {
            return 0;
        }

        try
        {
            using SqliteStoreReader reader = SqliteStoreReader.Open(store);
            return reader.ReadMeasurement("tieflow_unit").Count(p => p.Tag("unit") == "X300");
        }
        catch (Exception e) when (e is Microsoft.Data.Sqlite.SqliteException or IOException)
        {
            return 0;
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
