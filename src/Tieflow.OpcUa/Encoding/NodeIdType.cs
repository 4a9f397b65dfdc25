namespace Tieflow.OpcUa.Encoding;

/// <summary>The kind of identifier a <see cref="NodeId"/> holds.</summary>
public enum NodeIdType
{
    /// <summary>An unsigned 32-bit number (<c>i=</c>).</summary>
    Numeric = 0,

    /// <summary>A string (<c>s=</c>).</summary>
    String = 1,

    /// <summary>A GUID (<c>g=</c>).</summary>
    Guid = 2,

    /// <summary>An opaque byte string (<c>b=</c>, base64 in text).</summary>
    Opaque = 3,
}
