using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Tests.Encoding;

public sealed class StatusCodeTests
{
    // Values from docs/opcua.md §1.15, which matches the OPC Foundation's StatusCode.csv.
    [Theory]
    [InlineData("Good", 0x00000000u)]
    [InlineData("GoodSubscriptionTransferred", 0x002D0000u)]
    [InlineData("UncertainLastUsableValue", 0x40900000u)]
    [InlineData("BadSensorFailure", 0x808C0000u)]
    [InlineData("BadTimeout", 0x800A0000u)]
    [InlineData("BadConnectionClosed", 0x80AE0000u)]
    [InlineData("BadSessionIdInvalid", 0x80250000u)]
    [InlineData("BadTooManyPublishRequests", 0x80780000u)]
    [InlineData("BadMessageNotAvailable", 0x807B0000u)]
    [InlineData("BadNodeIdUnknown", 0x80340000u)]
    [InlineData("BadMonitoredItemFilterUnsupported", 0x80440000u)]
    [InlineData("BadDeadbandFilterInvalid", 0x808E0000u)]
    [InlineData("BadUserAccessDenied", 0x801F0000u)]
    [InlineData("BadDecodingError", 0x80070000u)]
    [InlineData("BadEncodingLimitsExceeded", 0x80080000u)]
    [InlineData("BadTcpMessageTooLarge", 0x80800000u)]
    [InlineData("BadProtocolVersionUnsupported", 0x80BE0000u)]
    [InlineData("BadSecurityChecksFailed", 0x80130000u)]
    public void TryParse_DigestTable_NameAndValueAgree(string name, uint value)
    {
        Assert.True(StatusCodes.TryParse(name, out var code));
        Assert.Equal(value, code.Code);
        Assert.Equal(name, new StatusCode(value).Name);
    }

    [Theory]
    [InlineData(0x00000000u, true, false, false)]
    [InlineData(0x40900000u, false, true, false)]
    [InlineData(0x808C0000u, false, false, true)]
    [InlineData(0xC0000000u, false, false, true)]
    public void Severity_TopTwoBits_Classify(uint code, bool good, bool uncertain, bool bad)
    {
        var s = new StatusCode(code);
        Assert.Equal(good, s.IsGood);
        Assert.Equal(uncertain, s.IsUncertain);
        Assert.Equal(bad, s.IsBad);
    }

    [Fact]
    public void Is_FlagBitsIgnored()
    {
        // docs/opcua.md §2.4: overflow sets InfoType DataValue plus the Overflow bit (| 0x480).
        var withOverflow = new StatusCode(StatusCodes.Good.Code | 0x480);
        Assert.True(withOverflow.Is(StatusCodes.Good));
        Assert.NotEqual(StatusCodes.Good, withOverflow);
        Assert.Equal("Good (0x00000480)", withOverflow.ToString());
    }

    [Fact]
    public void ToString_UnknownCode_Hex()
    {
        Assert.Equal("0x80FF0000", new StatusCode(0x80FF0000).ToString());
    }
}
