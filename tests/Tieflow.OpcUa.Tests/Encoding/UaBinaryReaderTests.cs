using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Tests.Encoding;

public sealed class UaBinaryReaderTests
{
    private static Variant RoundTrip(Variant value)
    {
        var writer = new UaBinaryWriter();
        writer.WriteVariant(value);
        var reader = new UaBinaryReader(writer.ToArray());
        var back = reader.ReadVariant();
        Assert.Equal(0, reader.Remaining);
        return back;
    }

    public static TheoryData<object> Scalars() => new()
    {
        true, (sbyte)-5, (byte)250, (short)-12345, (ushort)54321, -123456789, 4000000000u, long.MinValue, ulong.MaxValue,
        1.5f, -2.25e-300, "Hot水 Ümlaut", new DateTime(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc), Guid.Parse("72962b91-fa75-4ae6-8d28-b404dc7daf63"),
        new byte[] { 1, 2, 3 }, new XmlElement("<a>b</a>"), new NodeId("Plant.Unit1.Flow", 2), new ExpandedNodeId(new NodeId(7u), "urn:x", 3),
        StatusCodes.BadSensorFailure, new QualifiedName("Plant", 2), new LocalizedText("Flow", "en"),
    };

    [Theory]
    [MemberData(nameof(Scalars))]
    public void ReadVariant_EveryScalarType_RoundTrips(object value)
    {
        var v = Variant.From(value);
        Assert.Equal(v, RoundTrip(v));
    }

    [Theory]
    [MemberData(nameof(Scalars))]
    public void ReadVariant_ArrayOfEveryType_RoundTrips(object value)
    {
        var array = Array.CreateInstance(value.GetType(), 3);
        for (var i = 0; i < 3; i++)
        {
            array.SetValue(value, i);
        }

        var v = Variant.From(array);
        Assert.True(v.IsArray);
        Assert.Equal(v, RoundTrip(v));
    }

    [Fact]
    public void ReadVariant_Matrix_KeepsDimensions()
    {
        var v = new Variant(BuiltInType.Int32, new[] { 1, 2, 3, 4, 5, 6 }, [2, 3]);
        var back = RoundTrip(v);
        Assert.Equal([2, 3], back.ArrayDimensions!);
        Assert.Equal(v, back);
    }

    [Fact]
    public void ReadVariant_MatrixDimensionsNotMatchingLength_IsDecodingError()
    {
        // mask Int32|array|dims, 2 elements, dims [3]
        byte[] bytes = [0xC6, 2, 0, 0, 0, 1, 0, 0, 0, 2, 0, 0, 0, 1, 0, 0, 0, 3, 0, 0, 0];
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes).ReadVariant());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Fact]
    public void ReadVariant_NestedVariantsAndStructures_RoundTrip()
    {
        var inner = new Variant[] { Variant.From(1.0), Variant.From("x"), Variant.From(new[] { 1, 2 }) };
        var dv = new DataValue { Value = Variant.From(3.0), Status = StatusCodes.UncertainLastUsableValue };
        var eo = new ExtensionObject(new NodeId(886u), ExtensionObjectEncoding.Binary, new Tieflow.OpcUa.Encoding.Range { Low = 0, High = 100 });
        var back = RoundTrip(Variant.From(inner));
        Assert.Equal(Variant.From(inner), back);
        var dvBack = (DataValue)RoundTrip(Variant.From(dv)).Value!;
        Assert.Equal(StatusCodes.UncertainLastUsableValue, dvBack.Status);
        var eoBack = (ExtensionObject)RoundTrip(Variant.From(eo)).Value!;
        var range = Assert.IsType<Tieflow.OpcUa.Encoding.Range>(eoBack.Body);
        Assert.Equal(100.0, range.High, 12);
    }

    [Fact]
    public void ReadVariant_ReservedTypeIds26To31_ReadAsByteString()
    {
        // OPC 10000-6 §5.2.2.16: decoders treat type ids 26-31 as ByteString.
        byte[] bytes = [27, 2, 0, 0, 0, 0xAB, 0xCD];
        var v = new UaBinaryReader(bytes).ReadVariant();
        Assert.Equal(BuiltInType.ByteString, v.Type);
        Assert.Equal(new byte[] { 0xAB, 0xCD }, (byte[])v.Value!);
    }

    [Theory]
    [InlineData(32)]
    [InlineData(63)]
    public void ReadVariant_TypeIdsAbove31_AreDecodingErrors(byte typeId)
    {
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader([typeId, 0, 0, 0, 0]).ReadVariant());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Fact]
    public void ReadDataValue_AllFields_WireOrderWithPicoseconds()
    {
        var source = new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        var server = source.AddSeconds(1);
        var dv = new DataValue
        {
            Value = Variant.From(12.5), Status = StatusCodes.BadSensorFailure, SourceTimestamp = source, SourcePicoseconds = 1234,
            ServerTimestamp = server, ServerPicoseconds = 42,
        };
        var writer = new UaBinaryWriter();
        writer.WriteDataValue(dv);
        var bytes = writer.ToArray();

        // Mask 0x3F, then Value (1 + 8), Status (4), SourceTs (8), SourcePico (2), ServerTs (8), ServerPico (2): docs/opcua.md §1.4.
        Assert.Equal(0x3F, bytes[0]);
        Assert.Equal(1 + 9 + 4 + 8 + 2 + 8 + 2, bytes.Length);
        Assert.Equal(1234, BitConverter.ToUInt16(bytes, 1 + 9 + 4 + 8));
        Assert.Equal(42, BitConverter.ToUInt16(bytes, 1 + 9 + 4 + 8 + 2 + 8));
        var back = new UaBinaryReader(bytes).ReadDataValue();
        Assert.Equal(source, back.SourceTimestamp);
        Assert.Equal(server, back.ServerTimestamp);
        Assert.Equal((ushort)1234, back.SourcePicoseconds);
        Assert.Equal((ushort)42, back.ServerPicoseconds);
        Assert.Equal(StatusCodes.BadSensorFailure, back.Status);
    }

    [Fact]
    public void ReadDataValue_PicosecondsOver9999_ClampedTo9999()
    {
        byte[] bytes = [0x10, 0x10, 0x27]; // SourcePicoseconds = 10000
        Assert.Equal((ushort)9999, new UaBinaryReader(bytes).ReadDataValue().SourcePicoseconds);
    }

    [Fact]
    public void ReadDiagnosticInfo_WireOrder_LocaleBeforeLocalizedText()
    {
        // Mask 0x0C: Locale (0x08) then LocalizedText (0x04) on the wire (OPC 10000-6 §5.2.2.12).
        byte[] bytes = [0x0C, 7, 0, 0, 0, 9, 0, 0, 0];
        var d = new UaBinaryReader(bytes).ReadDiagnosticInfo();
        Assert.Equal(7, d.Locale);
        Assert.Equal(9, d.LocalizedText);
        var writer = new UaBinaryWriter();
        writer.WriteDiagnosticInfo(d);
        Assert.Equal(bytes, writer.ToArray());
    }

    [Fact]
    public void ReadDiagnosticInfo_Inner_RoundTrips()
    {
        var d = new DiagnosticInfo { SymbolicId = 1, AdditionalInfo = "more", InnerStatusCode = StatusCodes.BadTimeout, InnerDiagnosticInfo = new DiagnosticInfo { NamespaceUri = 2 } };
        var writer = new UaBinaryWriter();
        writer.WriteDiagnosticInfo(d);
        var back = new UaBinaryReader(writer.ToArray()).ReadDiagnosticInfo();
        Assert.Equal("more", back.AdditionalInfo);
        Assert.Equal(StatusCodes.BadTimeout, back.InnerStatusCode);
        Assert.Equal(2, back.InnerDiagnosticInfo!.NamespaceUri);
    }

    [Fact]
    public void ReadDateTime_UnixMilliseconds_MatchDigestFormula()
    {
        // docs/opcua.md §1.4: ticks = (unixMs + 11644473600000) * 10000.
        var t = new DateTime(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);
        var unixMs = (long)(t - DateTime.UnixEpoch).TotalMilliseconds;
        var writer = new UaBinaryWriter();
        writer.WriteDateTime(t);
        Assert.Equal((unixMs + 11644473600000L) * 10000L, BitConverter.ToInt64(writer.ToArray()));
    }

    [Theory]
    [InlineData(0L)]
    [InlineData(-5L)]
    public void ReadDateTime_ZeroOrNegative_IsMinValue(long ticks)
    {
        Assert.Equal(DateTime.MinValue, new UaBinaryReader(BitConverter.GetBytes(ticks)).ReadDateTime());
    }

    [Fact]
    public void ReadDateTime_Int64Max_IsMaxValue()
    {
        Assert.Equal(DateTime.MaxValue, new UaBinaryReader(BitConverter.GetBytes(long.MaxValue)).ReadDateTime());
    }

    [Fact]
    public void ReadString_NullAndEmpty_AreDistinct()
    {
        var writer = new UaBinaryWriter();
        writer.WriteString(null);
        writer.WriteString(string.Empty);
        Assert.Equal(new byte[] { 0xFF, 0xFF, 0xFF, 0xFF, 0, 0, 0, 0 }, writer.ToArray());
        var reader = new UaBinaryReader(writer.ToArray());
        Assert.Null(reader.ReadString());
        Assert.Equal(string.Empty, reader.ReadString());
    }

    [Theory]
    [InlineData(-2, 0x80070000u)] // negative other than -1: BadDecodingError
    [InlineData(100, 0x80070000u)] // more than the bytes remaining: BadDecodingError
    [InlineData(0x7FFFFFFF, 0x80080000u)] // over the 16 MiB limit: BadEncodingLimitsExceeded
    public void ReadString_BadLength_NamedStatus(int length, uint expected)
    {
        var bytes = BitConverter.GetBytes(length).Concat(new byte[10]).ToArray();
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes).ReadString());
        Assert.Equal(expected, ex.Status.Code);
    }

    [Fact]
    public void ReadString_InvalidUtf8_IsDecodingError()
    {
        byte[] bytes = [2, 0, 0, 0, 0xC3, 0x28];
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes).ReadString());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Fact]
    public void ReadVariant_ArrayLongerThanLimit_RefusedBeforeAllocating()
    {
        var limits = new EncodingLimits { MaxArrayLength = 10 };
        byte[] bytes = [0x8B, 11, 0, 0, 0];
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes, limits).ReadVariant());
        Assert.Equal(StatusCodes.BadEncodingLimitsExceeded, ex.Status);
    }

    [Fact]
    public void ReadVariant_ArrayLengthBeyondRemainingBytes_RefusedBeforeAllocating()
    {
        byte[] bytes = [0x8B, 0, 0, 1, 0]; // 65536 doubles announced, none present
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes).ReadVariant());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Theory]
    [InlineData(100, false)]
    [InlineData(101, true)]
    public void ReadVariant_NestingDepth_LimitedTo100(int depth, bool refused)
    {
        // depth Variants nested as one-element Variant arrays, the innermost a Boolean.
        var bytes = new List<byte>();
        for (var i = 1; i < depth; i++)
        {
            bytes.AddRange([0x98, 1, 0, 0, 0]);
        }

        bytes.AddRange([1, 1]);
        var reader = new UaBinaryReader(bytes.ToArray());
        if (refused)
        {
            var ex = Assert.Throws<UaDecodingException>(() => reader.ReadVariant());
            Assert.Equal(StatusCodes.BadEncodingLimitsExceeded, ex.Status);
        }
        else
        {
            Assert.Equal(BuiltInType.Variant, reader.ReadVariant().Type);
        }
    }

    [Fact]
    public void ReadExtensionObject_UnknownType_KeptOpaque()
    {
        byte[] bytes = [0x01, 0x02, 0x39, 0x30, 0x01, 3, 0, 0, 0, 9, 8, 7];
        var eo = new UaBinaryReader(bytes).ReadExtensionObject();
        Assert.Equal(new NodeId(12345u, 2), eo.TypeId);
        Assert.Equal(new byte[] { 9, 8, 7 }, (byte[])eo.Body!);
        var writer = new UaBinaryWriter();
        writer.WriteExtensionObject(eo);
        Assert.Equal(bytes, writer.ToArray());
    }

    [Fact]
    public void ReadExtensionObject_KnownBodyShorterThanFields_IsDecodingError()
    {
        // DataChangeFilter (724 = 0x02D4) with a 4-byte body instead of 16.
        byte[] bytes = [0x01, 0x00, 0xD4, 0x02, 0x01, 4, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0];
        var ex = Assert.Throws<UaDecodingException>(() => new UaBinaryReader(bytes).ReadExtensionObject());
        Assert.Equal(StatusCodes.BadDecodingError, ex.Status);
    }

    [Fact]
    public void ReadExtensionObject_DataChangeFilter_GoldenBytes()
    {
        // docs/opcua.md §1.10: DataChangeFilter (724) = trigger Int32 + deadbandType UInt32 + deadbandValue Double.
        var filter = new DataChangeFilter { Trigger = DataChangeTrigger.StatusValue, DeadbandType = 1, DeadbandValue = 0.25 };
        var writer = new UaBinaryWriter();
        writer.WriteEncodeableAsExtensionObject(filter);
        byte[] expected = [0x01, 0x00, 0xD4, 0x02, 0x01, 16, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, .. BitConverter.GetBytes(0.25)];
        Assert.Equal(expected, writer.ToArray());
    }
}
