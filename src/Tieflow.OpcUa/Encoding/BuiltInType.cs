namespace Tieflow.OpcUa.Encoding;

/// <summary>The built-in types of UA Binary (OPC 10000-6 §5.1.2); the numbers are the Variant type ids and DataType NodeIds.</summary>
public enum BuiltInType : byte
{
    /// <summary>No value (an empty Variant).</summary>
    Null = 0,

    /// <summary>Boolean, 1 byte.</summary>
    Boolean = 1,

    /// <summary>Signed 8-bit integer.</summary>
    SByte = 2,

    /// <summary>Unsigned 8-bit integer.</summary>
    Byte = 3,

    /// <summary>Signed 16-bit integer.</summary>
    Int16 = 4,

    /// <summary>Unsigned 16-bit integer.</summary>
    UInt16 = 5,

    /// <summary>Signed 32-bit integer.</summary>
    Int32 = 6,

    /// <summary>Unsigned 32-bit integer.</summary>
    UInt32 = 7,

    /// <summary>Signed 64-bit integer.</summary>
    Int64 = 8,

    /// <summary>Unsigned 64-bit integer.</summary>
    UInt64 = 9,

    /// <summary>IEEE 754 single precision.</summary>
    Float = 10,

    /// <summary>IEEE 754 double precision.</summary>
    Double = 11,

    /// <summary>UTF-8 string.</summary>
    String = 12,

    /// <summary>100 ns ticks since 1601-01-01 UTC.</summary>
    DateTime = 13,

    /// <summary>128-bit GUID.</summary>
    Guid = 14,

    /// <summary>Sequence of bytes.</summary>
    ByteString = 15,

    /// <summary>XML fragment as a UTF-8 string.</summary>
    XmlElement = 16,

    /// <summary>Node identifier.</summary>
    NodeId = 17,

    /// <summary>Node identifier with namespace URI and server index.</summary>
    ExpandedNodeId = 18,

    /// <summary>Status code.</summary>
    StatusCode = 19,

    /// <summary>Name qualified by a namespace index.</summary>
    QualifiedName = 20,

    /// <summary>Text with an optional locale.</summary>
    LocalizedText = 21,

    /// <summary>Structure with its encoding id.</summary>
    ExtensionObject = 22,

    /// <summary>Value with status and timestamps.</summary>
    DataValue = 23,

    /// <summary>Variant (only inside arrays).</summary>
    Variant = 24,

    /// <summary>Diagnostic information.</summary>
    DiagnosticInfo = 25,
}
