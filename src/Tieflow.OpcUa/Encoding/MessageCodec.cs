namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Encodes and decodes a service message body: the NodeId of the structure's binary encoding followed by its
/// fields (OPC 10000-6 §6.7.2, body of a MSG/OPN/CLO message).
/// </summary>
internal static class MessageCodec
{
    public static void Encode(UaBinaryWriter writer, IEncodeable message)
    {
        writer.WriteNodeId(new NodeId(message.BinaryEncodingId));
        message.Encode(writer);
    }

    public static byte[] Encode(IEncodeable message, EncodingLimits? limits = null)
    {
        var writer = new UaBinaryWriter(256, limits);
        Encode(writer, message);
        return writer.ToArray();
    }

    /// <summary>Reads the encoding id of a message body without decoding it (0 when it is not a namespace-0 numeric id).</summary>
    public static uint PeekEncodingId(byte[] buffer, int offset, int count)
    {
        var reader = new UaBinaryReader(buffer, offset, count);
        var id = reader.ReadNodeId();
        return id.NamespaceIndex == 0 && id.IdType == NodeIdType.Numeric ? id.NumericIdentifier : 0;
    }

    /// <summary>
    /// Decodes a message body. An unknown encoding id throws <see cref="UaDecodingException"/> with
    /// <see cref="StatusCodes.BadServiceUnsupported"/>; malformed bytes throw it with a decoding status.
    /// </summary>
    public static IEncodeable Decode(byte[] buffer, int offset, int count, EncodingLimits? limits = null)
    {
        var reader = new UaBinaryReader(buffer, offset, count, limits);
        var typeId = reader.ReadNodeId();
        if (typeId.NamespaceIndex != 0 || typeId.IdType != NodeIdType.Numeric || !EncodeableTypes.TryCreate(typeId.NumericIdentifier, out var message))
        {
            throw new UaDecodingException(StatusCodes.BadServiceUnsupported, $"Message with encoding id {typeId} is not a service this library knows");
        }

        message.Decode(reader);
        return message;
    }

    public static IEncodeable Decode(byte[] buffer, EncodingLimits? limits = null) => Decode(buffer, 0, buffer.Length, limits);
}
