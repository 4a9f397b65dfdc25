namespace Tieflow.OpcUa.Encoding;

/// <summary>A structure with a UA Binary encoding: the service messages and the structures carried in ExtensionObjects.</summary>
internal interface IEncodeable
{
    /// <summary>The numeric id (namespace 0) of the structure's DefaultBinary encoding node.</summary>
    uint BinaryEncodingId { get; }

    /// <summary>Writes the fields in wire order.</summary>
    void Encode(UaBinaryWriter writer);

    /// <summary>Reads the fields in wire order.</summary>
    void Decode(UaBinaryReader reader);
}
