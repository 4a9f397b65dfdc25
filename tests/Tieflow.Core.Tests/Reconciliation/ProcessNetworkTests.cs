using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class ProcessNetworkTests
{
    public static TheoryData<string, string[], NetworkStream[], string> BadNetworks() => new()
    {
        { "no node", [], [new NetworkStream("S1", null, "A")], "at least one node" },
        { "no stream", ["A"], [], "at least one stream" },
        { "unknown node", ["A"], [new NetworkStream("S1", null, "A"), new NetworkStream("S2", "A", "B")], "unknown node 'B'" },
        { "node without stream", ["A", "B"], [new NetworkStream("S1", null, "A")], "Node 'B' has no stream" },
        { "stream without ends", ["A"], [new NetworkStream("S1", null, "A"), new NetworkStream("S2", null, null)], "neither" },
        { "stream to itself", ["A"], [new NetworkStream("S1", "A", "A")], "same node" },
        { "duplicate stream", ["A"], [new NetworkStream("S1", null, "A"), new NetworkStream("S1", "A", null)], "'S1' appears more than once" },
        { "duplicate node", ["A", "A"], [new NetworkStream("S1", null, "A")], "'A' appears more than once" },
    };

    [Theory]
    [MemberData(nameof(BadNetworks))]
    public void Constructor_BadNetwork_ThrowsNamingTheItem(string scenario, string[] nodes, NetworkStream[] streams, string words)
    {
        ArgumentException e = Assert.Throws<ArgumentException>(() => new ProcessNetwork(nodes, streams));
        Assert.True(e.Message.Contains(words, StringComparison.Ordinal), $"{scenario}: {e.Message}");
    }

    [Fact]
    public void IndexOf_And_KeyAt_RoundTrip()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        Assert.Equal(56, network.QuantityCount);
        for (int v = 0; v < network.QuantityCount; v++)
        {
            Assert.Equal(v, network.IndexOf(network.KeyAt(v)));
        }

        Assert.Equal(-1, network.IndexOf(QuantityKey.FractionOf("feed", "zz")));
        Assert.Equal(-1, network.IndexOf(QuantityKey.FlowOf("nowhere")));
    }

    [Theory]
    [InlineData(200.0, 0.02, 0.0, 4.0)]
    [InlineData(-50.0, 0.02, 0.0, 1.0)]
    [InlineData(0.0, 0.02, 0.5, 0.5)]
    public void WithRelativeSigma_ScalesWithTheReadingAboveTheFloor(double value, double relative, double floor, double expected)
    {
        Measurement m = Measurement.WithRelativeSigma(QuantityKey.FlowOf("S1"), value, relative, floor);
        Assert.True(Math.Abs(m.Sigma - expected) < 1e-12);
        Assert.Throws<ArgumentOutOfRangeException>(() => Measurement.WithRelativeSigma(QuantityKey.FlowOf("S1"), value, 0));
    }
}
