using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Tests.Encoding;

public sealed class NodeIdTests
{
    [Theory]
    [InlineData("i=85", 0, NodeIdType.Numeric)]
    [InlineData("ns=2;s=Train.FeedFlow", 2, NodeIdType.String)]
    [InlineData("ns=1;g=09087e75-8e5e-499b-954f-f2a9603db28a", 1, NodeIdType.Guid)]
    [InlineData("ns=3;b=AQID", 3, NodeIdType.Opaque)]
    [InlineData("ns=65535;i=4294967295", 65535, NodeIdType.Numeric)]
    [InlineData("ns=2;s=a;b=c", 2, NodeIdType.String)]
    public void Parse_TextForms_RoundTripThroughToString(string text, int ns, NodeIdType type)
    {
        var id = NodeId.Parse(text);
        Assert.Equal(ns, id.NamespaceIndex);
        Assert.Equal(type, id.IdType);
        Assert.Equal(text, id.ToString());
        Assert.Equal(id, NodeId.Parse(id.ToString()));
    }

    [Theory]
    [InlineData("")]
    [InlineData("85")]
    [InlineData("ns=2")]
    [InlineData("ns=x;i=1")]
    [InlineData("ns=70000;i=1")]
    [InlineData("i=-1")]
    [InlineData("i=abc")]
    [InlineData("g=not-a-guid")]
    [InlineData("b=***")]
    [InlineData("x=1")]
    public void Parse_InvalidText_FormatExceptionQuotesInput(string text)
    {
        var ex = Assert.Throws<FormatException>(() => NodeId.Parse(text));
        Assert.Contains("NodeId", ex.Message, StringComparison.Ordinal);
    }

    // Encodings from OPC 10000-6 §5.2.2.9 (Tables 6-9 and the examples after them; from memory of the examples).
    [Theory]
    [InlineData("i=114", new byte[] { 0x00, 0x72 })]
    [InlineData("ns=5;i=1025", new byte[] { 0x01, 0x05, 0x01, 0x04 })]
    [InlineData("ns=256;i=1", new byte[] { 0x02, 0x00, 0x01, 0x01, 0x00, 0x00, 0x00 })]
    [InlineData("i=70000", new byte[] { 0x02, 0x00, 0x00, 0x70, 0x11, 0x01, 0x00 })]
    [InlineData("ns=1;s=Hot水", new byte[] { 0x03, 0x01, 0x00, 0x06, 0x00, 0x00, 0x00, 0x48, 0x6F, 0x74, 0xE6, 0xB0, 0xB4 })]
    [InlineData("ns=1;b=AQI=", new byte[] { 0x05, 0x01, 0x00, 0x02, 0x00, 0x00, 0x00, 0x01, 0x02 })]
    public void WriteNodeId_ShortestForm_MatchesSpecificationBytes(string text, byte[] expected)
    {
        var writer = new UaBinaryWriter();
        writer.WriteNodeId(NodeId.Parse(text));
        Assert.Equal(expected, writer.ToArray());
        Assert.Equal(NodeId.Parse(text), new UaBinaryReader(expected).ReadNodeId());
    }

    [Fact]
    public void WriteNodeId_Guid_Data1To3LittleEndian()
    {
        // OPC 10000-6 §5.1.3: Data1-Data3 little-endian, Data4 as is.
        var g = Guid.Parse("72962b91-fa75-4ae6-8d28-b404dc7daf63");
        var writer = new UaBinaryWriter();
        writer.WriteNodeId(new NodeId(g, 4));
        byte[] expected = [0x04, 0x04, 0x00, 0x91, 0x2B, 0x96, 0x72, 0x75, 0xFA, 0xE6, 0x4A, 0x8D, 0x28, 0xB4, 0x04, 0xDC, 0x7D, 0xAF, 0x63];
        Assert.Equal(expected, writer.ToArray());
    }

    [Fact]
    public void ReadNodeId_OpaqueAuthenticationToken_KeepsItsForm()
    {
        // docs/opcua.md §1.7: an opaque token must be echoed as opaque, not re-encoded as a string.
        var token = new NodeId(Enumerable.Range(0, 16).Select(i => (byte)i).ToArray(), 0);
        var writer = new UaBinaryWriter();
        writer.WriteNodeId(token);
        var back = new UaBinaryReader(writer.ToArray()).ReadNodeId();
        Assert.Equal(NodeIdType.Opaque, back.IdType);
        Assert.Equal(token, back);
        Assert.Equal(token.GetHashCode(), back.GetHashCode());
    }

    [Fact]
    public void ReadNodeId_ExpandedFlagsInPlainNodeId_IsDecodingError()
    {
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader([0x80, 0x01]).ReadNodeId());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Theory]
    [InlineData("nsu=urn:example:plant-sim;s=Plant.Unit1.Flow")]
    [InlineData("svr=2;nsu=urn:x;i=5")]
    [InlineData("ns=2;s=Plant")]
    public void ExpandedNodeIdParse_TextForms_RoundTrip(string text)
    {
        var id = ExpandedNodeId.Parse(text);
        Assert.Equal(text, id.ToString());
        var writer = new UaBinaryWriter();
        writer.WriteExpandedNodeId(id);
        Assert.Equal(id, new UaBinaryReader(writer.ToArray()).ReadExpandedNodeId());
    }

    [Fact]
    public void IsNull_DefaultAndZero_True()
    {
        Assert.True(NodeId.Null.IsNull);
        Assert.True(NodeId.Parse("i=0").IsNull);
        Assert.False(NodeId.Parse("ns=1;i=0").IsNull);
    }
}
