using Tieflow.Core.Monitoring;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Sources;

/// <summary>How a data change from the server becomes a sample: value unchanged, quality from the status, the source time kept.</summary>
public sealed class OpcUaSampleTests
{
    private static readonly DateTime Source = new(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);
    private static readonly DateTime Server = Source.AddMilliseconds(40);
    private static readonly DateTimeOffset Now = new(2026, 12, 2, 15, 0, 0, TimeSpan.Zero);

    private static SignalSample Sample(Variant value, StatusCode status, DateTime? source = null, DateTime? server = null) =>
        OpcUaSource.ToSample(new UaDataChange("FI-305", NodeId.Parse("ns=2;s=X300.FI305.PV"), value, status, source ?? Source, server ?? Server), Now);

    public static TheoryData<string, SignalQuality> Statuses => new()
    {
        { nameof(StatusCodes.Good), SignalQuality.Good },
        { nameof(StatusCodes.GoodOverload), SignalQuality.Good },
        { nameof(StatusCodes.UncertainLastUsableValue), SignalQuality.Uncertain }, // what the simulator sends for an uncertain reading
        { nameof(StatusCodes.UncertainEngineeringUnitsExceeded), SignalQuality.Uncertain },
        { nameof(StatusCodes.BadSensorFailure), SignalQuality.Bad }, // what the simulator sends for a bad reading
        { nameof(StatusCodes.BadNotConnected), SignalQuality.Bad },
    };

    [Theory]
    [MemberData(nameof(Statuses))]
    public void ToSample_Status_GivesTheQualityOfItsSeverity(string status, SignalQuality expected)
    {
        var code = (StatusCode)typeof(StatusCodes).GetField(status)!.GetValue(null)!;

        Assert.Equal(expected, Sample(new Variant(BuiltInType.Double, 1.234), code).Quality);
    }

    [Fact]
    public void ToSample_Reading_KeepsTheValueInTheEngineeringUnitAndTheSourceTime()
    {
        // FI-305 reads in t/h: the sample holds 1.234 t/h, as a history file would; the analysis converts to kg/h.
        SignalSample s = Sample(new Variant(BuiltInType.Double, 1.234), StatusCodes.Good);

        Assert.Equal("FI-305", s.Tag);
        Assert.Equal(1.234, s.Value);
        Assert.Equal(new DateTimeOffset(Source), s.Time);
    }

    [Theory]
    [InlineData(BuiltInType.Float, 2.5f, 2.5)]
    [InlineData(BuiltInType.Int32, 7, 7.0)]
    [InlineData(BuiltInType.UInt16, (ushort)9, 9.0)]
    [InlineData(BuiltInType.Boolean, true, 1.0)]
    public void ToSample_OtherNumericTypes_AreReadAsNumbers(BuiltInType type, object value, double expected)
    {
        SignalSample s = Sample(new Variant(type, value), StatusCodes.Good);

        Assert.Equal(expected, s.Value);
        Assert.Equal(SignalQuality.Good, s.Quality);
    }

    [Fact]
    public void ToSample_NotAFiniteNumber_IsBadWhateverItsStatus()
    {
        Assert.Equal(SignalQuality.Bad, Sample(new Variant(BuiltInType.String, "1.5"), StatusCodes.Good).Quality);
        Assert.Equal(SignalQuality.Bad, Sample(new Variant(BuiltInType.Double, double.NaN), StatusCodes.Good).Quality);
        Assert.Equal(SignalQuality.Bad, Sample(new Variant(BuiltInType.Double, double.PositiveInfinity), StatusCodes.Good).Quality);
        Assert.Equal(SignalQuality.Bad, Sample(Variant.Null, StatusCodes.Good).Quality);
        Assert.True(double.IsNaN(Sample(Variant.Null, StatusCodes.Good).Value));
    }

    [Fact]
    public void ToSample_NoSourceTime_TakesTheServerTimeElseTheClock()
    {
        Assert.Equal(new DateTimeOffset(Server), Sample(new Variant(BuiltInType.Double, 1.0), StatusCodes.Good, source: DateTime.MinValue).Time);
        Assert.Equal(Now, Sample(new Variant(BuiltInType.Double, 1.0), StatusCodes.Good, source: DateTime.MinValue, server: DateTime.MinValue).Time);
    }
}
