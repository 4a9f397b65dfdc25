using System.Text.Json;

namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// node-opcua's client (probe.mjs, an independent implementation) against our server over loopback: browse, read,
/// translate, subscribe and receive changing values, and multi-chunk responses with an 8192-byte buffer.
/// </summary>
[Collection(NodePeerCollection.Name)]
[Trait("Category", "Interop")]
public sealed class NodeClientAgainstOurServerTests(OurServerForProbe fixture) : IClassFixture<OurServerForProbe>
{
    [Fact]
    public async Task Probe_BrowseReadTranslate_SeesOurAddressSpace()
    {
        var lines = await fixture.MainRun.Value;

        var endpoint = Assert.Single(Kind(lines, "endpoints")).GetProperty("endpoints")[0];
        Assert.Equal(fixture.Server.EndpointUrl, endpoint.GetProperty("endpointUrl").GetString());
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
        var lines = await fixture.MainRun.Value;

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
    public async Task Probe_ReadWith8192ByteBuffer_GetsAMultiChunkResponse()
    {
        // The main run uses an 8192-byte buffer: 122 nodes x 8 attributes (under our 1000 operations per call) give
        // a response of about 22 kB, at least three chunks.
        var lines = await fixture.MainRun.Value;

        var reads = Kind(lines, "read").Where(r => r.GetProperty("node").GetString()!.StartsWith("ns=2;s=Plant.Tags.", StringComparison.Ordinal)).ToList();
        Assert.Equal(120 * 8, reads.Count);
        Assert.All(reads, r => Assert.Equal("Good", r.GetProperty("status").GetString()));
        var last = Assert.Single(reads, r => r.GetProperty("node").GetString() == "ns=2;s=Plant.Tags.Tag119" && r.GetProperty("attributeId").GetInt32() == 13);
        Assert.Equal(119.5, last.GetProperty("value").GetDouble(), 12);
    }

    [Fact]
    public async Task Probe_PercentDeadbands_GetPerItemResults()
    {
        var lines = await NodePeer.RunProbeAsync(fixture.Server.EndpointUrl, OurServerForProbe.ProbeTimeout,
            "--must-exist", "--subscribe", "ns=2;s=Plant.Unit1.Ramp,ns=2;s=Plant.Unit1.Level", "--deadband", "10", "--deadband-type", "pct", "--seconds", "1");

        var items = Kind(lines, "item").ToList();
        var ramp = Assert.Single(items, i => i.GetProperty("node").GetString() == "ns=2;s=Plant.Unit1.Ramp");
        Assert.Equal("error", ramp.GetProperty("status").GetString());
        Assert.Contains("BadMonitoredItemFilterUnsupported", ramp.GetProperty("message").GetString(), StringComparison.Ordinal);
        var level = Assert.Single(items, i => i.GetProperty("node").GetString() == "ns=2;s=Plant.Unit1.Level");
        Assert.Equal("Good", level.GetProperty("status").GetString());
    }

    private static IEnumerable<JsonElement> Kind(IReadOnlyList<JsonElement> lines, string kind) =>
        lines.Where(l => l.GetProperty("kind").GetString() == kind);
}
