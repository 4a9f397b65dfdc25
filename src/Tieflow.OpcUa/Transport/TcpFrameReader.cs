using System.Buffers.Binary;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>
/// Reads whole UA TCP messages (chunks) from a stream. The header is checked before the body is allocated: a known
/// message type (else BadTcpMessageTypeInvalid), chunk type F/C/A (F only for HEL/ACK/ERR), and
/// 8 ≤ size ≤ the limit (else BadTcpMessageTooLarge), as in docs/opcua.md §3 rules 1-2.
/// </summary>
internal static class TcpFrameReader
{
    /// <summary>Largest message accepted before the Hello has been processed (docs/opcua.md §3).</summary>
    public const int MaxSizeBeforeHello = 4096;

    public static async ValueTask<TcpFrame> ReadAsync(Stream stream, int maxSize, CancellationToken cancellationToken)
    {
        var header = new byte[TcpMessageType.HeaderSize];
        await ReadExactlyOrThrowAsync(stream, header, cancellationToken).ConfigureAwait(false);
        var (type, chunk, size) = ParseHeader(header, maxSize);
        var buffer = new byte[size];
        header.CopyTo(buffer, 0);
        await ReadExactlyOrThrowAsync(stream, buffer.AsMemory(TcpMessageType.HeaderSize), cancellationToken).ConfigureAwait(false);
        return new TcpFrame(type, chunk, buffer, size);
    }

    public static (uint Type, byte Chunk, int Size) ParseHeader(ReadOnlySpan<byte> header, int maxSize)
    {
        var type = (uint)(header[0] | (header[1] << 8) | (header[2] << 16));
        var chunk = header[3];
        var size = BinaryPrimitives.ReadUInt32LittleEndian(header[4..]);
        if (!TcpMessageType.IsKnown(type))
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"UA TCP message type '{TcpMessageType.Name(type)}' is unknown; expected HEL, ACK, ERR, RHE, OPN, MSG or CLO");
        }

        var secure = TcpMessageType.IsSecureConversation(type);
        if (chunk != TcpMessageType.Final && !(secure && chunk is TcpMessageType.Intermediate or TcpMessageType.Abort))
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"UA TCP {TcpMessageType.Name(type)} has chunk type 0x{chunk:X2}; expected 'F'{(secure ? ", 'C' or 'A'" : string.Empty)}");
        }

        if (size < TcpMessageType.HeaderSize || size > (uint)maxSize)
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTooLarge, $"UA TCP {TcpMessageType.Name(type)} announces {size} bytes; expected 8 to {maxSize}");
        }

        return (type, chunk, (int)size);
    }

    private static async ValueTask ReadExactlyOrThrowAsync(Stream stream, Memory<byte> buffer, CancellationToken cancellationToken)
    {
        try
        {
            await stream.ReadExactlyAsync(buffer, cancellationToken).ConfigureAwait(false);
        }
        catch (EndOfStreamException ex)
        {
            throw new ServiceResultException(StatusCodes.BadConnectionClosed, "The peer closed the connection", ex);
        }
        catch (IOException ex)
        {
            throw new ServiceResultException(StatusCodes.BadConnectionClosed, "The connection failed: " + ex.Message, ex);
        }
    }
}
