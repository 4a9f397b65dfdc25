using Tieflow.Service.Tests.Sources;
using Tieflow.Storage.Sqlite;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The monitor against a plant server that freezes (SIGSTOP, then SIGCONT) twice while <c>tieflow run</c> is subscribed:
/// each time it records the gap as a raised and cleared <c>source-gap</c> alert, resumes, and closes windows after it.
/// The plant runs at 600 times real time; every wait is on an event with a generous limit.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunPlantServerFaultTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(120);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task Run_PlantServerFrozenTwice_RecordsEachGapAndResumes()
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
                            "SamplingInterval": "00:00:00.100", "PublishingInterval": "00:00:00.200", "KeepAliveInterval": "00:00:01" },
                "Store": { "Kind": "sqlite", "Path": "{{store.Replace("\\", "/", StringComparison.Ordinal)}}" },
                "Health": { "Enabled": false } } }
            """);

        using SimulatorProcess sim = await SimulatorProcess.StartAsync(scenario, port, speed: 600);
        using var run = new TieflowProcess(_folder.Path, null, "run", "--settings", settings);
        for (int freeze = 1; freeze <= 2; freeze++)
        {
            // Connected (the first time, or again after the last gap), and a few plant hours of windows.
            Assert.True(run.WaitUntil(() => Count(run.Error, "connected at") >= freeze, Patience), $"freeze {freeze}: not connected: {run.Error}");
            await Task.Delay(TimeSpan.FromSeconds(6));
            sim.Freeze();
            bool lost = run.WaitUntil(() => Count(run.Error, "Alert raised on X300: source-gap") >= freeze, Patience);
            sim.Thaw();
            Assert.True(lost, $"freeze {freeze}: the gap was not raised: {run.Error}");
            Assert.True(run.WaitUntil(() => Count(run.Error, "Alert cleared on X300: source-gap") >= freeze, Patience), $"freeze {freeze}: the gap did not clear: {run.Error}");
        }

        // Windows close after the second gap too.
        await Task.Delay(TimeSpan.FromSeconds(8));
        run.Terminate();
        Assert.Equal(0, run.WaitForExit(Patience));

        using SqliteStoreReader reader = SqliteStoreReader.Open(store);
        Assert.Equal("ok", reader.IntegrityCheck());
        var gaps = reader.ReadMeasurement("tieflow_alert").Where(p => p.Tag("kind") == "source-gap" && p.Tag("unit") == "X300").OrderBy(p => p.Time).ToList();
        Assert.True(gaps.Count(p => Convert.ToDouble(p.Field("active"), System.Globalization.CultureInfo.InvariantCulture) == 1) >= 2, string.Join("\n", gaps));
        Assert.True(gaps.Count(p => Convert.ToDouble(p.Field("active"), System.Globalization.CultureInfo.InvariantCulture) == 0) >= 2, string.Join("\n", gaps));
        DateTimeOffset resumed = gaps[^1].Time;
        Assert.Contains(reader.ReadMeasurement("tieflow_unit"), p => p.Tag("unit") == "X300" && p.Time > resumed);
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
