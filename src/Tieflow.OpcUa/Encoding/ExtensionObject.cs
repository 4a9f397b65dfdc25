namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// A structure wrapped with the NodeId of its encoding (OPC 10000-6 §5.2.2.15). A body whose encoding id this
/// library knows is decoded into its structure type (<see cref="Body"/>); an unknown one is kept as raw bytes.
/// </summary>
public sealed class ExtensionObject
{
    /// <summary>Creates an extension object.</summary>
    /// <param name="typeId">The NodeId of the body's encoding (for example <c>i=724</c> for a binary DataChangeFilter).</param>
    /// <param name="encoding">How the body is encoded.</param>
    /// <param name="body">The decoded structure, a byte array (binary body kept opaque), an <see cref="XmlElement"/>, or null.</param>
    public ExtensionObject(NodeId typeId, ExtensionObjectEncoding encoding, object? body)
    {
        TypeId = typeId;
        Encoding = encoding;
        Body = body;
    }

    /// <summary>An extension object with no type and no body.</summary>
    public static ExtensionObject Null { get; } = new(NodeId.Null, ExtensionObjectEncoding.None, null);

    /// <summary>The NodeId of the body's encoding.</summary>
    public NodeId TypeId { get; }

    /// <summary>How the body is encoded.</summary>
    public ExtensionObjectEncoding Encoding { get; }

    /// <summary>The body: a decoded structure, raw bytes, an <see cref="XmlElement"/>, or null.</summary>
    public object? Body { get; }

    /// <summary>True when there is neither a type nor a body.</summary>
    public bool IsNull => TypeId.IsNull && Body is null;

    /// <summary>The type id and body kind.</summary>
    public override string ToString() => TypeId + " (" + (Body?.GetType().Name ?? "no body") + ")";
}
