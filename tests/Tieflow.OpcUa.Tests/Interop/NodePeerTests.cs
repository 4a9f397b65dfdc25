namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>The node-opcua peer itself: scripts start, answer commands and serve the documented address space.</summary>
[Collection(NodePeerCollection.Name)]
[Trait("Category", "Interop")]
public sealed class NodePeerTests(PlantPeerFixture fixture) : IClassFixture<PlantPeerFixture>
{
    [Fact]
    public async Task Command_SetUnknownVariable_AnswersErr()
    {
        var reply = await fixture.Peer.CommandAsync("set NoSuchTag 1");

        Assert.StartsWith("ERR unknown variable NoSuchTag", reply, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Probe_ReadConstant_ReturnsFixedValueAndSourceTime()
    {
        var lines = await NodePeer.RunProbeAsync(fixture.Peer.EndpointUrl, TimeSpan.FromSeconds(30),
            "--read", "ns=2;s=Plant.Unit1.Constant", "--must-exist");

        var read = Assert.Single(lines, l => l.GetProperty("kind").GetString() == "read");
        Assert.Equal(42.0, read.GetProperty("value").GetDouble(), 12);
        Assert.Equal("Good", read.GetProperty("status").GetString());
        Assert.Equal("2026-01-01T00:00:00.000Z", read.GetProperty("src").GetString());
    }
}
