using System.Buffers.Binary;
using System.Text;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Reads UA Binary (OPC 10000-6 §5.2) from a byte range. Every length is checked against the bytes remaining and
/// the <see cref="EncodingLimits"/> before anything is allocated; the only exception thrown is
/// <see cref="UaDecodingException"/>.
/// </summary>
internal sealed class UaBinaryReader
{
    private static readonly UTF8Encoding Utf8 = new(false, true);
    private readonly byte[] _buffer;
    private readonly EncodingLimits _limits;
    private int _position;
    private int _end;
    private int _depth;

    public UaBinaryReader(byte[] buffer, EncodingLimits? limits = null)
        : this(buffer, 0, buffer.Length, limits)
    {
    }

    public UaBinaryReader(byte[] buffer, int offset, int count, EncodingLimits? limits = null)
    {
        ArgumentNullException.ThrowIfNull(buffer);
        ArgumentOutOfRangeException.ThrowIfNegative(offset);
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(offset + (long)count, buffer.Length);
        _buffer = buffer;
        _position = offset;
        _end = offset + count;
        _limits = limits ?? EncodingLimits.Default;
    }

    public int Position => _position;

    public int Remaining => _end - _position;

    public EncodingLimits Limits => _limits;

    public static UaDecodingException Error(string message) => new(StatusCodes.BadDecodingError, message);

    public static UaDecodingException LimitError(string message) => new(StatusCodes.BadEncodingLimitsExceeded, message);

    private ReadOnlySpan<byte> Take(int count, string what)
    {
        if (_end - _position < count)
        {
            throw Error($"{what}: needs {count} bytes but only {_end - _position} remain");
        }

        var span = _buffer.AsSpan(_position, count);
        _position += count;
        return span;
    }

    public void Skip(int count) => Take(count, "skipped bytes");

    public bool ReadBoolean() => Take(1, "Boolean")[0] != 0;

    public sbyte ReadSByte() => unchecked((sbyte)Take(1, "SByte")[0]);

    public byte ReadByte() => Take(1, "Byte")[0];

    public short ReadInt16() => BinaryPrimitives.ReadInt16LittleEndian(Take(2, "Int16"));

    public ushort ReadUInt16() => BinaryPrimitives.ReadUInt16LittleEndian(Take(2, "UInt16"));

    public int ReadInt32() => BinaryPrimitives.ReadInt32LittleEndian(Take(4, "Int32"));

    public uint ReadUInt32() => BinaryPrimitives.ReadUInt32LittleEndian(Take(4, "UInt32"));

    public long ReadInt64() => BinaryPrimitives.ReadInt64LittleEndian(Take(8, "Int64"));

    public ulong ReadUInt64() => BinaryPrimitives.ReadUInt64LittleEndian(Take(8, "UInt64"));

    public float ReadFloat() => BinaryPrimitives.ReadSingleLittleEndian(Take(4, "Float"));

    public double ReadDouble() => BinaryPrimitives.ReadDoubleLittleEndian(Take(8, "Double"));

    public DateTime ReadDateTime() => UaDateTime.FromUaTicks(ReadInt64());

    public Guid ReadGuid() => new(Take(16, "Guid"));

    public StatusCode ReadStatusCode() => new(ReadUInt32());

    /// <summary>Reads a length prefix: -1 is null (returned as -1), other negatives are invalid, and the length must fit the limit and the bytes remaining.</summary>
    private int ReadLength(string what, int limit, int minimumElementSize)
    {
        var length = ReadInt32();
        if (length == -1)
        {
            return -1;
        }

        if (length < -1)
        {
            throw Error($"{what}: length {length} is negative");
        }

        if (length > limit)
        {
            throw LimitError($"{what}: length {length} is over the limit of {limit}");
        }

        if ((long)length * minimumElementSize > _end - _position)
        {
            throw Error($"{what}: length {length} needs at least {(long)length * minimumElementSize} bytes but only {_end - _position} remain");
        }

        return length;
    }

    public string? ReadString() => ReadStringCore("String");

    private string? ReadStringCore(string what)
    {
        var length = ReadLength(what, _limits.MaxStringLength, 1);
        if (length < 0)
        {
            return null;
        }

        if (length == 0)
        {
            return string.Empty;
        }

        var bytes = Take(length, what);
        try
        {
            return Utf8.GetString(bytes);
        }
        catch (DecoderFallbackException)
        {
            throw Error($"{what}: the bytes are not valid UTF-8");
        }
    }

    public byte[]? ReadByteString()
    {
        var length = ReadLength("ByteString", _limits.MaxByteStringLength, 1);
        if (length < 0)
        {
            return null;
        }

        return length == 0 ? [] : Take(length, "ByteString").ToArray();
    }

    public XmlElement ReadXmlElement() => new(ReadStringCore("XmlElement"));

    public NodeId ReadNodeId()
    {
        var encoding = ReadByte();
        if ((encoding & 0xC0) != 0)
        {
            throw Error($"NodeId: encoding byte 0x{encoding:X2} has ExpandedNodeId flags");
        }

        return ReadNodeIdBody(encoding);
    }

    private NodeId ReadNodeIdBody(byte encoding)
    {
        switch (encoding & 0x3F)
        {
            case 0x00:
                return new NodeId(ReadByte());
            case 0x01:
                var ns = ReadByte();
                return new NodeId(ReadUInt16(), ns);
            case 0x02:
                var ns2 = ReadUInt16();
                return new NodeId(ReadUInt32(), ns2);
            case 0x03:
                var ns3 = ReadUInt16();
                return new NodeId(ReadString() ?? string.Empty, ns3);
            case 0x04:
                var ns4 = ReadUInt16();
                return new NodeId(ReadGuid(), ns4);
            case 0x05:
                var ns5 = ReadUInt16();
                return NodeId.FromTrustedOpaque(ReadByteString() ?? [], ns5);
            default:
                throw Error($"NodeId: unknown encoding byte 0x{encoding:X2}, expected 0x00-0x05");
        }
    }

    public ExpandedNodeId ReadExpandedNodeId()
    {
        var encoding = ReadByte();
        var id = ReadNodeIdBody(encoding);
        string? uri = null;
        uint server = 0;
        if ((encoding & 0x80) != 0)
        {
            uri = ReadString();
        }

        if ((encoding & 0x40) != 0)
        {
            server = ReadUInt32();
        }

        return new ExpandedNodeId(id, uri, server);
    }

    public QualifiedName ReadQualifiedName()
    {
        var ns = ReadUInt16();
        return new QualifiedName(ReadString(), ns);
    }

    public LocalizedText ReadLocalizedText()
    {
        var mask = ReadByte();
        var locale = (mask & 0x01) != 0 ? ReadString() : null;
        var text = (mask & 0x02) != 0 ? ReadString() : null;
        return new LocalizedText(text, locale);
    }

    public ExtensionObject ReadExtensionObject()
    {
        Enter("ExtensionObject");
        var typeId = ReadNodeId();
        var encoding = ReadByte();
        ExtensionObject result;
        switch (encoding)
        {
            case 0:
                result = typeId.IsNull ? ExtensionObject.Null : new ExtensionObject(typeId, ExtensionObjectEncoding.None, null);
                break;
            case 1:
                var length = ReadLength("ExtensionObject body", _limits.MaxByteStringLength, 1);
                if (length < 0)
                {
                    result = new ExtensionObject(typeId, ExtensionObjectEncoding.None, null);
                    break;
                }

                if (typeId.NamespaceIndex == 0 && typeId.IdType == NodeIdType.Numeric && EncodeableTypes.TryCreate(typeId.NumericIdentifier, out var body))
                {
                    var savedEnd = _end;
                    var bodyEnd = _position + length;
                    _end = bodyEnd;
                    try
                    {
                        body.Decode(this);
                    }
                    finally
                    {
                        _end = savedEnd;
                    }

                    // Extra bytes after the known fields are allowed (a newer revision of the structure); skip them.
                    _position = bodyEnd;
                    result = new ExtensionObject(typeId, ExtensionObjectEncoding.Binary, body);
                }
                else
                {
                    result = new ExtensionObject(typeId, ExtensionObjectEncoding.Binary, Take(length, "ExtensionObject body").ToArray());
                }

                break;
            case 2:
                result = new ExtensionObject(typeId, ExtensionObjectEncoding.Xml, ReadXmlElement());
                break;
            default:
                throw Error($"ExtensionObject {typeId}: unknown body encoding 0x{encoding:X2}, expected 0, 1 or 2");
        }

        _depth--;
        return result;
    }

    /// <summary>Reads an ExtensionObject that must hold a <typeparamref name="T"/> (or nothing).</summary>
    public T? ReadEncodeable<T>(string what)
        where T : class, IEncodeable
    {
        var eo = ReadExtensionObject();
        if (eo.Body is null)
        {
            return null;
        }

        return eo.Body as T ?? throw Error($"{what}: expected a {typeof(T).Name}, found encoding {eo.TypeId}");
    }

    public DataValue ReadDataValue()
    {
        Enter("DataValue");
        var mask = ReadByte();
        var value = (mask & 0x01) != 0 ? ReadVariant() : default;
        var status = (mask & 0x02) != 0 ? ReadStatusCode() : default;
        var sourceTs = (mask & 0x04) != 0 ? ReadDateTime() : DateTime.MinValue;
        var sourcePico = (mask & 0x10) != 0 ? ClampPicoseconds(ReadUInt16()) : (ushort)0;
        var serverTs = (mask & 0x08) != 0 ? ReadDateTime() : DateTime.MinValue;
        var serverPico = (mask & 0x20) != 0 ? ClampPicoseconds(ReadUInt16()) : (ushort)0;
        _depth--;
        return new DataValue
        {
            Value = value,
            Status = status,
            SourceTimestamp = sourceTs,
            SourcePicoseconds = sourcePico,
            ServerTimestamp = serverTs,
            ServerPicoseconds = serverPico,
        };
    }

    private static ushort ClampPicoseconds(ushort value) => value >= 10000 ? (ushort)9999 : value;

    public DiagnosticInfo ReadDiagnosticInfo()
    {
        Enter("DiagnosticInfo");
        var mask = ReadByte();
        var result = new DiagnosticInfo
        {
            SymbolicId = (mask & 0x01) != 0 ? ReadInt32() : null,
            NamespaceUri = (mask & 0x02) != 0 ? ReadInt32() : null,
            Locale = (mask & 0x08) != 0 ? ReadInt32() : null,
            LocalizedText = (mask & 0x04) != 0 ? ReadInt32() : null,
            AdditionalInfo = (mask & 0x10) != 0 ? ReadString() : null,
            InnerStatusCode = (mask & 0x20) != 0 ? ReadStatusCode() : null,
            InnerDiagnosticInfo = (mask & 0x40) != 0 ? ReadDiagnosticInfo() : null,
        };
        _depth--;
        return result;
    }

    public Variant ReadVariant()
    {
        Enter("Variant");
        var mask = ReadByte();
        var typeId = mask & 0x3F;
        if (typeId > 31)
        {
            throw Error($"Variant: built-in type id {typeId} is invalid (0-25 are defined, 26-31 read as ByteString)");
        }

        // Type ids 26-31 are reserved and read as ByteString (OPC 10000-6 §5.2.2.16).
        var type = typeId > 25 ? BuiltInType.ByteString : (BuiltInType)typeId;
        Variant result;
        if (type == BuiltInType.Null)
        {
            if ((mask & 0xC0) != 0)
            {
                throw Error($"Variant: mask 0x{mask:X2} marks an array of the null type");
            }

            result = default;
        }
        else if ((mask & 0x80) != 0)
        {
            var array = ReadArrayOfType(type, "Variant array");
            int[]? dims = null;
            if ((mask & 0x40) != 0)
            {
                dims = ReadInt32Array("Variant array dimensions");
                long product = 1;
                foreach (var d in dims)
                {
                    if (d < 0)
                    {
                        throw Error($"Variant: array dimension {d} is negative");
                    }

                    product *= d;
                    if (product > array.Length)
                    {
                        break;
                    }
                }

                if (product != array.Length)
                {
                    throw Error($"Variant: array dimensions [{string.Join(",", dims)}] do not match the {array.Length} elements");
                }
            }

            result = Variant.Trusted(type, array, dims);
        }
        else
        {
            if ((mask & 0x40) != 0)
            {
                throw Error($"Variant: mask 0x{mask:X2} gives dimensions for a scalar");
            }

            result = Variant.Trusted(type, ReadScalar(type));
        }

        _depth--;
        return result;
    }

    private object ReadScalar(BuiltInType type) => type switch
    {
        BuiltInType.Boolean => ReadBoolean(),
        BuiltInType.SByte => ReadSByte(),
        BuiltInType.Byte => ReadByte(),
        BuiltInType.Int16 => ReadInt16(),
        BuiltInType.UInt16 => ReadUInt16(),
        BuiltInType.Int32 => ReadInt32(),
        BuiltInType.UInt32 => ReadUInt32(),
        BuiltInType.Int64 => ReadInt64(),
        BuiltInType.UInt64 => ReadUInt64(),
        BuiltInType.Float => ReadFloat(),
        BuiltInType.Double => ReadDouble(),
        BuiltInType.String => ReadString() ?? string.Empty,
        BuiltInType.DateTime => ReadDateTime(),
        BuiltInType.Guid => ReadGuid(),
        BuiltInType.ByteString => ReadByteString() ?? [],
        BuiltInType.XmlElement => ReadXmlElement(),
        BuiltInType.NodeId => ReadNodeId(),
        BuiltInType.ExpandedNodeId => ReadExpandedNodeId(),
        BuiltInType.StatusCode => ReadStatusCode(),
        BuiltInType.QualifiedName => ReadQualifiedName(),
        BuiltInType.LocalizedText => ReadLocalizedText(),
        BuiltInType.ExtensionObject => ReadExtensionObject(),
        BuiltInType.DataValue => ReadDataValue(),
        BuiltInType.Variant => ReadVariant(),
        BuiltInType.DiagnosticInfo => ReadDiagnosticInfo(),
        _ => throw Error($"Variant: built-in type {type} has no scalar encoding"),
    };

    private static int MinimumSize(BuiltInType type) => type switch
    {
        BuiltInType.Int16 or BuiltInType.UInt16 or BuiltInType.NodeId or BuiltInType.ExpandedNodeId => 2,
        BuiltInType.Int32 or BuiltInType.UInt32 or BuiltInType.Float or BuiltInType.StatusCode => 4,
        BuiltInType.String or BuiltInType.ByteString or BuiltInType.XmlElement => 4,
        BuiltInType.Int64 or BuiltInType.UInt64 or BuiltInType.Double or BuiltInType.DateTime => 8,
        BuiltInType.Guid => 16,
        BuiltInType.QualifiedName => 6,
        BuiltInType.ExtensionObject => 3,
        _ => 1,
    };

    private Array ReadArrayOfType(BuiltInType type, string what)
    {
        var length = ReadArrayLength(what, MinimumSize(type));
        if (length < 0)
        {
            length = 0;
        }

        switch (type)
        {
            case BuiltInType.Double:
                var doubles = new double[length];
                for (var i = 0; i < length; i++)
                {
                    doubles[i] = ReadDouble();
                }

                return doubles;
            case BuiltInType.Byte:
                return Take(length, what).ToArray();
            default:
                var array = Array.CreateInstance(Variant.ClrType(type)!, length);
                for (var i = 0; i < length; i++)
                {
                    array.SetValue(ReadScalar(type), i);
                }

                return array;
        }
    }

    /// <summary>Reads an array length: -1 (null) is returned as -1; the length is checked against the limit and the bytes remaining.</summary>
    public int ReadArrayLength(string what, int minimumElementSize) => ReadLength(what, _limits.MaxArrayLength, minimumElementSize);

    public int[] ReadInt32Array(string what)
    {
        var length = ReadArrayLength(what, 4);
        if (length <= 0)
        {
            return [];
        }

        var result = new int[length];
        for (var i = 0; i < length; i++)
        {
            result[i] = ReadInt32();
        }

        return result;
    }

    public uint[] ReadUInt32Array(string what)
    {
        var length = ReadArrayLength(what, 4);
        if (length <= 0)
        {
            return [];
        }

        var result = new uint[length];
        for (var i = 0; i < length; i++)
        {
            result[i] = ReadUInt32();
        }

        return result;
    }

    private void Enter(string what)
    {
        if (++_depth > _limits.MaxNestingDepth)
        {
            throw LimitError($"{what}: nesting deeper than {_limits.MaxNestingDepth} levels");
        }
    }
}
