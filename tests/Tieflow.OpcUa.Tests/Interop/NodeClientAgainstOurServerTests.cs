using System.Text.Json;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// node-opcua's client (probe.mjs, an independent implementation) against our server over loopback: browse, read,
/// translate, subscribe and receive changing values, and multi-chunk responses with an 8192-byte buffer.
/// </summary>
public sealed class NodeClientAgainstOurServerTests : IAsyncLifetime
{
    private static readonly TimeSpan ProbeTimeout = TimeSpan.FromSeconds(60);
    private static readonly DateTime Measured = new(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    private readonly CancellationTokenSource _stop = new();
    private UaServer _server = null!;
    private Task _ticker = Task.CompletedTask;
    private NodeId _ramp;
    private NodeId _quality;

    public async Task InitializeAsync()
    {
        _server = new UaServer(new UaServerOptions { ResourcePath = "/sim" });
        var plant = _server.AddFolder(UaServer.ObjectsFolder, "Plant");
        var unit = _server.AddObject(plant, "Unit1");
        _ramp = _server.AddVariable(unit, "Ramp", new Variant(BuiltInType.Double, 0.0));
        _quality = _server.AddVariable(unit, "Quality", new Variant(BuiltInType.Double, 0.0));
        _server.AddVariable(unit, "Level", new Variant(BuiltInType.Double, 10.0), new UaVariableOptions { EngineeringUnitsRange = (0, 100) });
        var tags = _server.AddFolder(plant, "Tags");
        for (var i = 0; i < 300; i++)
        {
            _server.AddVariable(tags, $"Tag{i:000}", new Variant(BuiltInType.Double, i + 0.5));
        }
        _server.UpdateValue(_quality, new Variant(BuiltInType.Double, 12.5), StatusCodes.BadSensorFailure, Measured);
        await _server.StartAsync();
        _ticker = TickAsync(_stop.Token);
    }

    public async Task DisposeAsync()
    {
        await _stop.CancelAsync();
        await _ticker;
        await _server.DisposeAsync();
        _stop.Dispose();
    }

    [Fact]
    public async Task Probe_BrowseReadTranslate_SeesOurAddressSpace()
    {
        var lines = await NodePeer.RunProbeAsync(_server.EndpointUrl, ProbeTimeout,
            "--must-exist", "--browse", "i=85", "--depth", "1",
            "--read", "ns=2;s=Plant.Unit1.Quality,i=2255", "--attributes",
            "--path", "/Objects/2:Plant/2:Unit1/2:Ramp");

        var endpoint = Assert.Single(Kind(lines, "endpoints")).GetProperty("endpoints")[0];
        Assert.Equal(_server.EndpointUrl, endpoint.GetProperty("endpointUrl").GetString());
        var objects = Assert.Single(Kind(lines, "browse"), l => l.GetProperty("node").GetString() == "i=85");
        var names = objects.GetProperty("references").EnumerateArray().Select(r => r.GetProperty("browseName").GetString()).ToList();
        Assert.Contains("Server", names);
        Assert.Contains("2:Plant", names);
        var plant = Assert.Single(Kind(lines, "browse"), l => l.GetProperty("node").GetString() == "ns=2;s=Plant");
        Assert.Equal(["2:Unit1", "2:Tags"], plant.GetProperty("references").EnumerateArray().Select(r => r.GetProperty("browseName").GetString()));

        var translate = Assert.Single(Kind(lines, "translate"));
        Assert.Equal("ns=2;s=Plant.Unit1.Ramp", translate.GetProperty("targets")[0].GetProperty("nodeId").GetString());

        var reads = Kind(lines, "read").Where(l => l.GetProperty("node").GetString() == "ns=2;s=Plant.Unit1.Quality").ToList();
        var value = Assert.Single(reads, r => r.GetProperty("attributeId").GetInt32() == 13);
        Assert.Equal(12.5, value.GetProperty("value").GetDouble(), 12);
        Assert.Equal("BadSensorFailure", value.GetProperty("status").GetString());
        Assert.Equal("2030-01-01T00:00:00.000Z", value.GetProperty("src").GetString());
        var dataType = Assert.Single(reads, r => r.GetProperty("attributeId").GetInt32() == 14);
        Assert.Equal("ns=0;i=11", dataType.GetProperty("value").GetString());
        var namespaces = Assert.Single(Kind(lines, "read"), l => l.GetProperty("node").GetString() == "ns=0;i=2255" && l.GetProperty("attributeId").GetInt32() == 13);
        Assert.Equal("urn:tieflow:plant", namespaces.GetProperty("value")[2].GetString());
    }

    [Fact]
    public async Task Probe_Subscribe_ReceivesChangingValues()
    {
        var lines = await NodePeer.RunProbeAsync(_server.EndpointUrl, ProbeTimeout,
            "--must-exist", "--subscribe", "ns=2;s=Plant.Unit1.Ramp", "--seconds", "3");

        var subscription = Assert.Single(Kind(lines, "subscription"));
        Assert.Equal(250, subscription.GetProperty("publishingInterval").GetDouble(), 6);
        var values = Kind(lines, "data").Select(d => d.GetProperty("value").GetDouble()).ToList();
        Assert.True(values.Count >= 5, $"expected several notifications in 3 s, got {values.Count}");
        for (var i = 1; i < values.Count; i++)
        {
            Assert.True(values[i] > values[i - 1], $"the ramp must rise: {string.Join(", ", values)}");
        }
    }

    [Fact]
    public async Task Probe_PercentDeadbands_GetPerItemResults()
    {
        var lines = await NodePeer.RunProbeAsync(_server.EndpointUrl, ProbeTimeout,
            "--must-exist", "--subscribe", "ns=2;s=Plant.Unit1.Ramp,ns=2;s=Plant.Unit1.Level", "--deadband", "10", "--deadband-type", "pct", "--seconds", "1");

        var items = Kind(lines, "item").ToList();
        var ramp = Assert.Single(items, i => i.GetProperty("node").GetString() == "ns=2;s=Plant.Unit1.Ramp");
        Assert.Equal("error", ramp.GetProperty("status").GetString());
        Assert.Contains("BadMonitoredItemFilterUnsupported", ramp.GetProperty("message").GetString(), StringComparison.Ordinal);
        var level = Assert.Single(items, i => i.GetProperty("node").GetString() == "ns=2;s=Plant.Unit1.Level");
        Assert.Equal("Good", level.GetProperty("status").GetString());
    }

    [Fact]
    public async Task Probe_ReadWith8192ByteBuffer_GetsAMultiChunkResponse()
    {
        // 120 nodes x 8 attributes stay under our 1000 operations per call; the response (about 22 kB: each node
        // adds two names and five small values) needs at least three 8192-byte chunks.
        var nodes = string.Join(',', Enumerable.Range(0, 120).Select(i => $"ns=2;s=Plant.Tags.Tag{i:000}"));

        var lines = await NodePeer.RunProbeAsync(_server.EndpointUrl, ProbeTimeout, "--must-exist", "--rb", "8192", "--read", nodes, "--attributes");

        var reads = Kind(lines, "read").ToList();
        Assert.Equal(120 * 8, reads.Count);
        Assert.All(reads, r => Assert.Equal("Good", r.GetProperty("status").GetString()));
        var last = Assert.Single(reads, r => r.GetProperty("node").GetString() == "ns=2;s=Plant.Tags.Tag119" && r.GetProperty("attributeId").GetInt32() == 13);
        Assert.Equal(119.5, last.GetProperty("value").GetDouble(), 12);
    }

    private static IEnumerable<JsonElement> Kind(IReadOnlyList<JsonElement> lines, string kind) =>
        lines.Where(l => l.GetProperty("kind").GetString() == kind);

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
            _server.UpdateValue(_ramp, new Variant(BuiltInType.Double, value), StatusCodes.Good, TimeProvider.System.GetUtcNow().UtcDateTime);
        }
    }
}
