using System.Text.Json;
using Tieflow.Service.Tests.Sources;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// <c>tieflow run --settings</c> as a site runs it, in two processes: the simulated plant serving its instruments over
/// OPC UA (<c>tieflow-sim run --serve</c>) and the monitor subscribed to it with a lab drop folder, writing to the
/// embedded store. The plant runs at 600 times real time so that half-hour windows close within seconds; assertions are
/// on what arrived, with generous margins.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunOpcUaEndToEndTests : IDisposable
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(180);
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task Run_OpcUaSourceAndLabFolder_StoresWindowsOfTheServedPlantAndProcessesTheLabFile()
    {
        string plant = ServedScenario.Plant;
        string scenario = ServedScenario.Write(_folder, TimeSpan.FromDays(2));
        int port = SimulatorProcess.FreePort();
        string labs = Path.Combine(_folder.Path, "lab-drop");
        Directory.CreateDirectory(labs);
        File.WriteAllText(Path.Combine(labs, "shift-a.csv"), "sampled,reported,stream,component,value\n2026-03-02T00:10:00Z,2026-03-02T00:40:00Z,X300/raffinate,acetone,0.0765\n");
        string store = Path.Combine(_folder.Path, "data", "site.db");
        string settings = _folder.Write("site.settings.json", $$"""
            { "Tieflow": {
                "Plant": "{{plant}}",
                "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://127.0.0.1:{{port}}", "Security": "None", "SamplingInterval": "00:00:00.100", "PublishingInterval": "00:00:00.200" },
                "Labs": { "Folder": "lab-drop", "PollInterval": "00:00:00.200", "SettleTime": "00:00:00" },
                "Store": { "Kind": "sqlite", "Path": "{{store.Replace("\\", "/", StringComparison.Ordinal)}}" },
                "Health": { "Enabled": false } } }
            """);

        using SimulatorProcess sim = await SimulatorProcess.StartAsync(scenario, port, speed: 600);
        using var run = new TieflowProcess(_folder.Path, null, "run", "--settings", settings, "--max-runtime", "30s");
        int exit = run.WaitForExit(Patience);

        Assert.True(exit == 0, $"exit {exit}: {run.Error}");
        Assert.Contains("not a safety system", run.Output, StringComparison.Ordinal);
        Assert.True(File.Exists(Path.Combine(labs, "processed", "shift-a.csv")), $"the lab file was not processed: {run.Error}");
        CliRun show = CliRun.Of("show", "--store", store, "--json");
        Assert.True(show.ExitCode == 0, show.Error);
        using JsonDocument doc = JsonDocument.Parse(show.Output);
        JsonElement counts = doc.RootElement.GetProperty("counts");

        // 30 s at 600 times real time are about 5 plant hours: several half-hour windows of both units.
        Assert.True(counts.TryGetProperty("tieflow_unit", out JsonElement units) && units.GetInt64() >= 4, $"{counts}\n{run.Error}");
        Assert.True(counts.TryGetProperty("tieflow_stream", out JsonElement streams) && streams.GetInt64() > 0, counts.ToString());
    }
}
