using System.Text.Json;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// Our server with a plant-like address space and a rising ramp, plus one shared probe.mjs run (browse, read with
/// attributes, translate and a 3 s subscription over an 8192-byte buffer) so that node-opcua's start-up is paid once.
/// </summary>
public sealed class OurServerForProbe : IAsyncLifetime
{
    /// <summary>Longest a probe run may take on a busy machine.</summary>
    public static readonly TimeSpan ProbeTimeout = TimeSpan.FromSeconds(60);

    private static readonly DateTime Measured = new(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    private readonly CancellationTokenSource _stop = new();
    private Task _ticker = Task.CompletedTask;
    private NodeId _ramp;

    /// <summary>The server under test.</summary>
    public UaServer Server { get; private set; } = null!;

    /// <summary>The JSON lines of the shared probe run (started on first use).</summary>
    public Lazy<Task<IReadOnlyList<JsonElement>>> MainRun { get; private set; } = null!;

    /// <inheritdoc/>
    public async Task InitializeAsync()
    {
        Server = new UaServer(new UaServerOptions { ResourcePath = "/sim" });
        var plant = Server.AddFolder(UaServer.ObjectsFolder, "Plant");
        var unit = Server.AddObject(plant, "Unit1");
        _ramp = Server.AddVariable(unit, "Ramp", new Variant(BuiltInType.Double, 0.0));
        var quality = Server.AddVariable(unit, "Quality", new Variant(BuiltInType.Double, 0.0));
        Server.AddVariable(unit, "Level", new Variant(BuiltInType.Double, 10.0), new UaVariableOptions { EngineeringUnitsRange = (0, 100) });
        var tags = Server.AddFolder(plant, "Tags");
        for (var i = 0; i < 300; i++)
        {
            Server.AddVariable(tags, $"Tag{i:000}", new Variant(BuiltInType.Double, i + 0.5));
        }
        Server.UpdateValue(quality, new Variant(BuiltInType.Double, 12.5), StatusCodes.BadSensorFailure, Measured);
        await Server.StartAsync();
        _ticker = TickAsync(_stop.Token);
        var nodes = string.Join(',', new[] { "ns=2;s=Plant.Unit1.Quality", "i=2255" }.Concat(Enumerable.Range(0, 120).Select(i => $"ns=2;s=Plant.Tags.Tag{i:000}")));
        MainRun = new Lazy<Task<IReadOnlyList<JsonElement>>>(() => NodePeer.RunProbeAsync(Server.EndpointUrl, ProbeTimeout,
            "--must-exist", "--rb", "8192", "--browse", "i=85", "--depth", "1",
            "--read", nodes, "--attributes",
            "--path", "/Objects/2:Plant/2:Unit1/2:Ramp",
            "--subscribe", "ns=2;s=Plant.Unit1.Ramp", "--seconds", "3"));
    }

    /// <inheritdoc/>
    public async Task DisposeAsync()
    {
        await _stop.CancelAsync();
        await _ticker;
        await Server.DisposeAsync();
        _stop.Dispose();
    }

    private async Task TickAsync(CancellationToken ct)
    {
        var value = 0.0;
        while (!ct.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(100, ct);
            }
            catch (OperationCanceledException)
            {
                return;
            }
            value += 0.1;
            Server.UpdateValue(_ramp, new Variant(BuiltInType.Double, value), StatusCodes.Good, TimeProvider.System.GetUtcNow().UtcDateTime);
        }
    }
}
