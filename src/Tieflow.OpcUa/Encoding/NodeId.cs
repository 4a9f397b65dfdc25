using System.Globalization;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// The identifier of a node in a server's address space (OPC 10000-3 §8.2): a namespace index and a numeric,
/// string, GUID or opaque identifier. The default value is the null NodeId <c>i=0</c>. Text form as in
/// OPC 10000-6 §5.3.1.10: <c>ns=2;s=Train.FeedFlow</c>, <c>i=85</c>, <c>ns=1;g=...</c>, <c>ns=1;b=base64</c>.
/// </summary>
public readonly struct NodeId : IEquatable<NodeId>
{
    private readonly uint _numeric;
    private readonly object? _identifier;

    /// <summary>Creates a numeric NodeId.</summary>
    /// <param name="identifier">The number.</param>
    /// <param name="namespaceIndex">The namespace index (0 is the OPC UA namespace).</param>
    public NodeId(uint identifier, ushort namespaceIndex = 0)
    {
        _numeric = identifier;
        _identifier = null;
        NamespaceIndex = namespaceIndex;
        IdType = NodeIdType.Numeric;
    }

    /// <summary>Creates a string NodeId.</summary>
    /// <param name="identifier">The string; not null.</param>
    /// <param name="namespaceIndex">The namespace index.</param>
    /// <exception cref="ArgumentNullException">The identifier is null.</exception>
    public NodeId(string identifier, ushort namespaceIndex)
    {
        ArgumentNullException.ThrowIfNull(identifier);
        _numeric = 0;
        _identifier = identifier;
        NamespaceIndex = namespaceIndex;
        IdType = NodeIdType.String;
    }

    /// <summary>Creates a GUID NodeId.</summary>
    /// <param name="identifier">The GUID.</param>
    /// <param name="namespaceIndex">The namespace index.</param>
    public NodeId(Guid identifier, ushort namespaceIndex)
    {
        _numeric = 0;
        _identifier = identifier;
        NamespaceIndex = namespaceIndex;
        IdType = NodeIdType.Guid;
    }

    /// <summary>Creates an opaque NodeId; the bytes are copied.</summary>
    /// <param name="identifier">The bytes; not null.</param>
    /// <param name="namespaceIndex">The namespace index.</param>
    /// <exception cref="ArgumentNullException">The identifier is null.</exception>
    public NodeId(byte[] identifier, ushort namespaceIndex)
    {
        ArgumentNullException.ThrowIfNull(identifier);
        _numeric = 0;
        _identifier = identifier.ToArray();
        NamespaceIndex = namespaceIndex;
        IdType = NodeIdType.Opaque;
    }

    private NodeId(ushort namespaceIndex, byte[] trustedOpaque)
    {
        _numeric = 0;
        _identifier = trustedOpaque;
        NamespaceIndex = namespaceIndex;
        IdType = NodeIdType.Opaque;
    }

    /// <summary>The null NodeId (<c>i=0</c>).</summary>
    public static NodeId Null => default;

    /// <summary>The namespace index.</summary>
    public ushort NamespaceIndex { get; }

    /// <summary>The kind of identifier.</summary>
    public NodeIdType IdType { get; }

    /// <summary>The number of a numeric NodeId (0 for the other kinds).</summary>
    public uint NumericIdentifier => _numeric;

    /// <summary>The string of a string NodeId, otherwise null.</summary>
    public string? StringIdentifier => _identifier as string;

    /// <summary>The GUID of a GUID NodeId, otherwise null.</summary>
    public Guid? GuidIdentifier => _identifier is Guid g ? g : null;

    /// <summary>The bytes of an opaque NodeId (read-only view), otherwise empty.</summary>
    public ReadOnlyMemory<byte> OpaqueIdentifier => _identifier as byte[] ?? ReadOnlyMemory<byte>.Empty;

    /// <summary>True for the null NodeId: namespace 0 with identifier 0, an empty string, an empty GUID or no bytes.</summary>
    public bool IsNull => NamespaceIndex == 0 && IdType switch
    {
        NodeIdType.Numeric => _numeric == 0,
        NodeIdType.String => ((string)_identifier!).Length == 0,
        NodeIdType.Guid => (Guid)_identifier! == Guid.Empty,
        _ => ((byte[])_identifier!).Length == 0,
    };

    internal static NodeId FromTrustedOpaque(byte[] bytes, ushort namespaceIndex) => new(namespaceIndex, bytes);

    internal byte[]? OpaqueArray => _identifier as byte[];

    /// <summary>Parses the text form (<c>ns=2;s=Train.FeedFlow</c>, <c>i=85</c>, <c>g=</c>, <c>b=</c>).</summary>
    /// <param name="text">The text.</param>
    /// <returns>The NodeId.</returns>
    /// <exception cref="FormatException">The text is not a NodeId; the message quotes it and says what was expected.</exception>
    public static NodeId Parse(string text)
    {
        if (!TryParse(text, out var id, out var error))
        {
            throw new FormatException(error);
        }

        return id;
    }

    /// <summary>Parses the text form without throwing.</summary>
    /// <param name="text">The text.</param>
    /// <param name="nodeId">The NodeId when the text is valid.</param>
    /// <returns>True when the text is a valid NodeId.</returns>
    public static bool TryParse(string? text, out NodeId nodeId) => TryParse(text, out nodeId, out _);

    internal static bool TryParse(string? text, out NodeId nodeId, out string error)
    {
        nodeId = default;
        const string Expected = "expected 'i=<number>', 's=<string>', 'g=<guid>' or 'b=<base64>', optionally after 'ns=<index>;'";
        if (string.IsNullOrEmpty(text))
        {
            error = "NodeId text is empty: " + Expected;
            return false;
        }

        ushort ns = 0;
        var rest = text.AsSpan();
        if (rest.StartsWith("ns="))
        {
            var semi = rest.IndexOf(';');
            if (semi < 0 || !ushort.TryParse(rest[3..semi], NumberStyles.None, CultureInfo.InvariantCulture, out ns))
            {
                error = $"NodeId '{text}': the namespace index after 'ns=' must be a number 0-65535 followed by ';'";
                return false;
            }

            rest = rest[(semi + 1)..];
        }

        return TryParseIdentifier(text, rest, ns, out nodeId, out error);
    }

    internal static bool TryParseIdentifier(string text, ReadOnlySpan<char> rest, ushort ns, out NodeId nodeId, out string error)
    {
        nodeId = default;
        error = string.Empty;
        if (rest.Length < 2 || rest[1] != '=')
        {
            error = $"NodeId '{text}': expected 'i=<number>', 's=<string>', 'g=<guid>' or 'b=<base64>' after the namespace";
            return false;
        }

        var value = rest[2..];
        switch (rest[0])
        {
            case 'i':
                if (!uint.TryParse(value, NumberStyles.None, CultureInfo.InvariantCulture, out var n))
                {
                    error = $"NodeId '{text}': 'i=' must be followed by a number 0-4294967295";
                    return false;
                }

                nodeId = new NodeId(n, ns);
                return true;
            case 's':
                nodeId = new NodeId(value.ToString(), ns);
                return true;
            case 'g':
                if (!Guid.TryParse(value, out var g))
                {
                    error = $"NodeId '{text}': 'g=' must be followed by a GUID such as 09087e75-8e5e-499b-954f-f2a9603db28a";
                    return false;
                }

                nodeId = new NodeId(g, ns);
                return true;
            case 'b':
                var bytes = new byte[value.Length];
                if (!Convert.TryFromBase64Chars(value, bytes, out var written))
                {
                    error = $"NodeId '{text}': 'b=' must be followed by base64 text";
                    return false;
                }

                nodeId = new NodeId(ns, bytes[..written]);
                return true;
            default:
                error = $"NodeId '{text}': unknown identifier type '{rest[0]}', expected i, s, g or b";
                return false;
        }
    }

    /// <summary>The text form, with <c>ns=</c> omitted for namespace 0.</summary>
    public override string ToString()
    {
        var prefix = NamespaceIndex == 0 ? string.Empty : "ns=" + NamespaceIndex.ToString(CultureInfo.InvariantCulture) + ";";
        return prefix + IdentifierText();
    }

    internal string IdentifierText() => IdType switch
    {
        NodeIdType.Numeric => "i=" + _numeric.ToString(CultureInfo.InvariantCulture),
        NodeIdType.String => "s=" + (string)_identifier!,
        NodeIdType.Guid => "g=" + ((Guid)_identifier!).ToString("D"),
        _ => "b=" + Convert.ToBase64String((byte[])_identifier!),
    };

    /// <inheritdoc />
    public bool Equals(NodeId other)
    {
        if (NamespaceIndex != other.NamespaceIndex || IdType != other.IdType)
        {
            return false;
        }

        return IdType switch
        {
            NodeIdType.Numeric => _numeric == other._numeric,
            NodeIdType.String => string.Equals((string)_identifier!, (string)other._identifier!, StringComparison.Ordinal),
            NodeIdType.Guid => (Guid)_identifier! == (Guid)other._identifier!,
            _ => ((byte[])_identifier!).AsSpan().SequenceEqual((byte[])other._identifier!),
        };
    }

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is NodeId other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode()
    {
        var h = IdType switch
        {
            NodeIdType.Numeric => (int)_numeric,
            NodeIdType.String => StringComparer.Ordinal.GetHashCode((string)_identifier!),
            NodeIdType.Guid => ((Guid)_identifier!).GetHashCode(),
            _ => OpaqueHash((byte[])_identifier!),
        };
        return HashCode.Combine(NamespaceIndex, IdType, h);
    }

    private static int OpaqueHash(byte[] bytes)
    {
        var hash = new HashCode();
        hash.AddBytes(bytes);
        return hash.ToHashCode();
    }

    /// <summary>Compares two NodeIds by namespace, kind and identifier.</summary>
    /// <param name="left">First NodeId.</param>
    /// <param name="right">Second NodeId.</param>
    public static bool operator ==(NodeId left, NodeId right) => left.Equals(right);

    /// <summary>Compares two NodeIds by namespace, kind and identifier.</summary>
    /// <param name="left">First NodeId.</param>
    /// <param name="right">Second NodeId.</param>
    public static bool operator !=(NodeId left, NodeId right) => !left.Equals(right);
}
