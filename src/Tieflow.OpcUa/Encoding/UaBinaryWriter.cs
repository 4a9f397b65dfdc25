using System.Buffers.Binary;
using System.Text;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Writes UA Binary (OPC 10000-6 §5.2) into a growing buffer. Strings and byte strings over the limits throw
/// <see cref="ServiceResultException"/> with <see cref="StatusCodes.BadEncodingLimitsExceeded"/>.
/// </summary>
internal sealed class UaBinaryWriter
{
    private static readonly UTF8Encoding Utf8 = new(false, true);
    private readonly EncodingLimits _limits;
    private byte[] _buffer;
    private int _position;
    private int _depth;

    public UaBinaryWriter(int capacity = 256, EncodingLimits? limits = null)
    {
        _buffer = new byte[Math.Max(capacity, 16)];
        _limits = limits ?? EncodingLimits.Default;
    }

    public int Position => _position;

    public ReadOnlySpan<byte> WrittenSpan => _buffer.AsSpan(0, _position);

    public ReadOnlyMemory<byte> WrittenMemory => _buffer.AsMemory(0, _position);

    public byte[] ToArray() => _buffer.AsSpan(0, _position).ToArray();

    public void Reset()
    {
        _position = 0;
        _depth = 0;
    }

    public Span<byte> GetSpan(int count)
    {
        if (_buffer.Length - _position < count)
        {
            var size = Math.Max(_buffer.Length * 2, _position + count);
            Array.Resize(ref _buffer, size);
        }

        var span = _buffer.AsSpan(_position, count);
        _position += count;
        return span;
    }

    public void PatchInt32(int position, int value) => BinaryPrimitives.WriteInt32LittleEndian(_buffer.AsSpan(position, 4), value);

    public void PatchUInt32(int position, uint value) => BinaryPrimitives.WriteUInt32LittleEndian(_buffer.AsSpan(position, 4), value);

    public void WriteBoolean(bool value) => GetSpan(1)[0] = value ? (byte)1 : (byte)0;

    public void WriteSByte(sbyte value) => GetSpan(1)[0] = unchecked((byte)value);

    public void WriteByte(byte value) => GetSpan(1)[0] = value;

    public void WriteInt16(short value) => BinaryPrimitives.WriteInt16LittleEndian(GetSpan(2), value);

    public void WriteUInt16(ushort value) => BinaryPrimitives.WriteUInt16LittleEndian(GetSpan(2), value);

    public void WriteInt32(int value) => BinaryPrimitives.WriteInt32LittleEndian(GetSpan(4), value);

    public void WriteUInt32(uint value) => BinaryPrimitives.WriteUInt32LittleEndian(GetSpan(4), value);

    public void WriteInt64(long value) => BinaryPrimitives.WriteInt64LittleEndian(GetSpan(8), value);

    public void WriteUInt64(ulong value) => BinaryPrimitives.WriteUInt64LittleEndian(GetSpan(8), value);

    public void WriteFloat(float value) => BinaryPrimitives.WriteSingleLittleEndian(GetSpan(4), value);

    public void WriteDouble(double value) => BinaryPrimitives.WriteDoubleLittleEndian(GetSpan(8), value);

    public void WriteString(string? value)
    {
        if (value is null)
        {
            WriteInt32(-1);
            return;
        }

        var count = Utf8.GetByteCount(value);
        if (count > _limits.MaxStringLength)
        {
            throw new ServiceResultException(StatusCodes.BadEncodingLimitsExceeded, $"A string of {count} bytes is over the limit of {_limits.MaxStringLength}");
        }

        WriteInt32(count);
        Utf8.GetBytes(value, GetSpan(count));
    }

    public void WriteDateTime(DateTime value) => WriteInt64(UaDateTime.ToUaTicks(value));

    public void WriteGuid(Guid value) => value.TryWriteBytes(GetSpan(16));

    public void WriteByteString(ReadOnlySpan<byte> value, bool isNull = false)
    {
        if (isNull)
        {
            WriteInt32(-1);
            return;
        }

        if (value.Length > _limits.MaxByteStringLength)
        {
            throw new ServiceResultException(StatusCodes.BadEncodingLimitsExceeded, $"A byte string of {value.Length} bytes is over the limit of {_limits.MaxByteStringLength}");
        }

        WriteInt32(value.Length);
        value.CopyTo(GetSpan(value.Length));
    }

    public void WriteByteString(byte[]? value) => WriteByteString(value, value is null);

    public void WriteXmlElement(XmlElement value) => WriteString(value.Value);

    public void WriteNodeId(NodeId value) => WriteNodeIdCore(value, 0);

    private void WriteNodeIdCore(NodeId value, byte flags)
    {
        var ns = value.NamespaceIndex;
        switch (value.IdType)
        {
            case NodeIdType.Numeric:
                var id = value.NumericIdentifier;
                if (ns == 0 && id <= byte.MaxValue)
                {
                    WriteByte(flags);
                    WriteByte((byte)id);
                }
                else if (ns <= byte.MaxValue && id <= ushort.MaxValue)
                {
                    WriteByte((byte)(0x01 | flags));
                    WriteByte((byte)ns);
                    WriteUInt16((ushort)id);
                }
                else
                {
                    WriteByte((byte)(0x02 | flags));
                    WriteUInt16(ns);
                    WriteUInt32(id);
                }

                break;
            case NodeIdType.String:
                WriteByte((byte)(0x03 | flags));
                WriteUInt16(ns);
                WriteString(value.StringIdentifier);
                break;
            case NodeIdType.Guid:
                WriteByte((byte)(0x04 | flags));
                WriteUInt16(ns);
                WriteGuid(value.GuidIdentifier!.Value);
                break;
            default:
                WriteByte((byte)(0x05 | flags));
                WriteUInt16(ns);
                WriteByteString(value.OpaqueIdentifier.Span);
                break;
        }
    }

    public void WriteExpandedNodeId(ExpandedNodeId value)
    {
        byte flags = 0;
        if (value.NamespaceUri is not null)
        {
            flags |= 0x80;
        }

        if (value.ServerIndex != 0)
        {
            flags |= 0x40;
        }

        WriteNodeIdCore(value.NodeId, flags);
        if (value.NamespaceUri is not null)
        {
            WriteString(value.NamespaceUri);
        }

        if (value.ServerIndex != 0)
        {
            WriteUInt32(value.ServerIndex);
        }
    }

    public void WriteStatusCode(StatusCode value) => WriteUInt32(value.Code);

    public void WriteQualifiedName(QualifiedName value)
    {
        WriteUInt16(value.NamespaceIndex);
        WriteString(value.Name);
    }

    public void WriteLocalizedText(LocalizedText value)
    {
        byte mask = 0;
        if (value.Locale is not null)
        {
            mask |= 0x01;
        }

        if (value.Text is not null)
        {
            mask |= 0x02;
        }

        WriteByte(mask);
        if (value.Locale is not null)
        {
            WriteString(value.Locale);
        }

        if (value.Text is not null)
        {
            WriteString(value.Text);
        }
    }

    public void WriteExtensionObject(ExtensionObject? value)
    {
        if (value is null || value.IsNull)
        {
            WriteNodeId(NodeId.Null);
            WriteByte(0);
            return;
        }

        switch (value.Body)
        {
            case IEncodeable encodeable:
                WriteEncodeableAsExtensionObject(encodeable);
                break;
            case byte[] bytes:
                WriteNodeId(value.TypeId);
                WriteByte(1);
                WriteByteString(bytes);
                break;
            case XmlElement xml:
                WriteNodeId(value.TypeId);
                WriteByte(2);
                WriteXmlElement(xml);
                break;
            default:
                WriteNodeId(value.TypeId);
                WriteByte(0);
                break;
        }
    }

    public void WriteEncodeableAsExtensionObject(IEncodeable? value)
    {
        if (value is null)
        {
            WriteNodeId(NodeId.Null);
            WriteByte(0);
            return;
        }

        Enter();
        WriteNodeId(new NodeId(value.BinaryEncodingId));
        WriteByte(1);
        var lengthAt = _position;
        WriteInt32(0);
        value.Encode(this);
        PatchInt32(lengthAt, _position - lengthAt - 4);
        _depth--;
    }

    public void WriteDataValue(DataValue? value)
    {
        if (value is null)
        {
            WriteByte(0);
            return;
        }

        byte mask = 0;
        if (!value.Value.IsNull)
        {
            mask |= 0x01;
        }

        if (value.Status.Code != 0)
        {
            mask |= 0x02;
        }

        if (value.SourceTimestamp != DateTime.MinValue)
        {
            mask |= 0x04;
        }

        if (value.ServerTimestamp != DateTime.MinValue)
        {
            mask |= 0x08;
        }

        if (value.SourcePicoseconds != 0)
        {
            mask |= 0x10;
        }

        if (value.ServerPicoseconds != 0)
        {
            mask |= 0x20;
        }

        WriteByte(mask);
        if ((mask & 0x01) != 0)
        {
            WriteVariant(value.Value);
        }

        if ((mask & 0x02) != 0)
        {
            WriteStatusCode(value.Status);
        }

        if ((mask & 0x04) != 0)
        {
            WriteDateTime(value.SourceTimestamp);
        }

        if ((mask & 0x10) != 0)
        {
            WriteUInt16(value.SourcePicoseconds);
        }

        if ((mask & 0x08) != 0)
        {
            WriteDateTime(value.ServerTimestamp);
        }

        if ((mask & 0x20) != 0)
        {
            WriteUInt16(value.ServerPicoseconds);
        }
    }

    public void WriteDiagnosticInfo(DiagnosticInfo? value)
    {
        if (value is null)
        {
            WriteByte(0);
            return;
        }

        Enter();
        byte mask = 0;
        if (value.SymbolicId.HasValue)
        {
            mask |= 0x01;
        }

        if (value.NamespaceUri.HasValue)
        {
            mask |= 0x02;
        }

        if (value.LocalizedText.HasValue)
        {
            mask |= 0x04;
        }

        if (value.Locale.HasValue)
        {
            mask |= 0x08;
        }

        if (value.AdditionalInfo is not null)
        {
            mask |= 0x10;
        }

        if (value.InnerStatusCode.HasValue)
        {
            mask |= 0x20;
        }

        if (value.InnerDiagnosticInfo is not null)
        {
            mask |= 0x40;
        }

        WriteByte(mask);
        if (value.SymbolicId is { } symbolicId)
        {
            WriteInt32(symbolicId);
        }

        if (value.NamespaceUri is { } namespaceUri)
        {
            WriteInt32(namespaceUri);
        }

        if (value.Locale is { } locale)
        {
            WriteInt32(locale);
        }

        if (value.LocalizedText is { } text)
        {
            WriteInt32(text);
        }

        if (value.AdditionalInfo is not null)
        {
            WriteString(value.AdditionalInfo);
        }

        if (value.InnerStatusCode is { } inner)
        {
            WriteStatusCode(inner);
        }

        if (value.InnerDiagnosticInfo is not null)
        {
            WriteDiagnosticInfo(value.InnerDiagnosticInfo);
        }

        _depth--;
    }

    public void WriteVariant(Variant value)
    {
        if (value.IsNull)
        {
            WriteByte(0);
            return;
        }

        Enter();
        var mask = (byte)value.Type;
        var dims = value.DimensionsArray;
        if (value.Value is Array && value.Type != BuiltInType.ByteString || value.Value is byte[][])
        {
            mask |= 0x80;
            if (dims is not null)
            {
                mask |= 0x40;
            }

            WriteByte(mask);
            WriteArrayOfType(value.Type, (Array)value.Value!);
            if (dims is not null)
            {
                WriteInt32(dims.Length);
                foreach (var d in dims)
                {
                    WriteInt32(d);
                }
            }
        }
        else
        {
            WriteByte(mask);
            WriteScalar(value.Type, value.Value!);
        }

        _depth--;
    }

    private void WriteArrayOfType(BuiltInType type, Array array)
    {
        WriteInt32(array.Length);
        switch (array)
        {
            case double[] doubles:
                foreach (var d in doubles)
                {
                    WriteDouble(d);
                }

                return;
            case byte[] bytes when type == BuiltInType.Byte:
                bytes.CopyTo(GetSpan(bytes.Length));
                return;
            default:
                foreach (var item in array)
                {
                    WriteScalar(type, item!);
                }

                return;
        }
    }

    private void WriteScalar(BuiltInType type, object value)
    {
        switch (type)
        {
            case BuiltInType.Boolean: WriteBoolean((bool)value); break;
            case BuiltInType.SByte: WriteSByte((sbyte)value); break;
            case BuiltInType.Byte: WriteByte((byte)value); break;
            case BuiltInType.Int16: WriteInt16((short)value); break;
            case BuiltInType.UInt16: WriteUInt16((ushort)value); break;
            case BuiltInType.Int32: WriteInt32((int)value); break;
            case BuiltInType.UInt32: WriteUInt32((uint)value); break;
            case BuiltInType.Int64: WriteInt64((long)value); break;
            case BuiltInType.UInt64: WriteUInt64((ulong)value); break;
            case BuiltInType.Float: WriteFloat((float)value); break;
            case BuiltInType.Double: WriteDouble((double)value); break;
            case BuiltInType.String: WriteString((string?)value); break;
            case BuiltInType.DateTime: WriteDateTime((DateTime)value); break;
            case BuiltInType.Guid: WriteGuid((Guid)value); break;
            case BuiltInType.ByteString: WriteByteString((byte[]?)value); break;
            case BuiltInType.XmlElement: WriteXmlElement((XmlElement)value); break;
            case BuiltInType.NodeId: WriteNodeId((NodeId)value); break;
            case BuiltInType.ExpandedNodeId: WriteExpandedNodeId((ExpandedNodeId)value); break;
            case BuiltInType.StatusCode: WriteStatusCode((StatusCode)value); break;
            case BuiltInType.QualifiedName: WriteQualifiedName((QualifiedName)value); break;
            case BuiltInType.LocalizedText: WriteLocalizedText((LocalizedText)value); break;
            case BuiltInType.ExtensionObject: WriteExtensionObject((ExtensionObject?)value); break;
            case BuiltInType.DataValue: WriteDataValue((DataValue?)value); break;
            case BuiltInType.Variant: WriteVariant((Variant)value); break;
            case BuiltInType.DiagnosticInfo: WriteDiagnosticInfo((DiagnosticInfo?)value); break;
            default: throw new ServiceResultException(StatusCodes.BadEncodingError, $"Built-in type {type} cannot be encoded in a Variant");
        }
    }

    private void Enter()
    {
        if (++_depth > _limits.MaxNestingDepth)
        {
            _depth = 0;
            throw new ServiceResultException(StatusCodes.BadEncodingLimitsExceeded, $"Nesting deeper than {_limits.MaxNestingDepth} levels");
        }
    }
}
