namespace Tieflow.OpcUa.Encoding;

/// <summary>How the body of an <see cref="ExtensionObject"/> is encoded (the byte after its TypeId).</summary>
public enum ExtensionObjectEncoding : byte
{
    /// <summary>No body.</summary>
    None = 0,

    /// <summary>A UA Binary body (ByteString).</summary>
    Binary = 1,

    /// <summary>An XML body (XmlElement).</summary>
    Xml = 2,
}
