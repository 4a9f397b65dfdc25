using System.Buffers.Binary;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;

namespace Tieflow.OpcUa.Transport;

/// <summary>
/// Chunking and reassembly of UA Secure Conversation messages (OPC 10000-6 §6.7), used by both the client and the
/// server; each chunk is secured by the channel's <see cref="ChannelSecurity"/> (nothing under SecurityPolicy None). Sends: splits a body into chunks no larger than the peer's receive buffer
/// (headers included), numbers every chunk, and refuses a message over the peer's MaxMessageSize / MaxChunkCount.
/// Receives: checks the channel id, token id and contiguous sequence numbers (a violation throws
/// <see cref="UaDecodingException"/>: close the channel), and reassembles bodies per request id within the local
/// <see cref="TransportLimits"/>. Not thread-safe: the caller serialises sends (chunks of different messages must
/// not interleave on the wire) and runs receives on one loop.
/// </summary>
internal sealed class SecureChannelCodec
{
    public const string SecurityPolicyNoneUri = "http://opcfoundation.org/UA/SecurityPolicy#None";

    /// <summary>Legacy (RSA and None) sequence numbers wrap after this value to a value below 1024 (OPC 10000-6 §6.7.2.4).</summary>
    public const uint LegacyWrapLimit = 4294966271u;

    /// <summary>Message header (12) + symmetric security header (4) + sequence header (8).</summary>
    public const int SymmetricHeaderSize = 24;

    private const int MaxPartialMessages = 16;

    private readonly TransportLimits _local;
    private readonly Dictionary<uint, Partial> _partials = [];
    private readonly HashSet<uint> _discarding = [];
    private uint _lastSentSequence;
    private uint? _lastReceivedSequence;

    public SecureChannelCodec(TransportLimits local, uint firstSequenceNumber = 1)
    {
        _local = local;
        _lastSentSequence = firstSequenceNumber - 1;
    }

    /// <summary>The channel's security (default none).</summary>
    public ChannelSecurity Security { get; set; } = ChannelSecurity.None(true);

    /// <summary>
    /// Checks the asymmetric security header of a received OPN (policy URI, sender certificate, receiver thumbprint)
    /// before the chunk is decrypted. The default accepts only the channel's own policy, the expected peer
    /// certificate and our own thumbprint; a server replaces it to learn the policy from the first OPN.
    /// </summary>
    public Action<string?, byte[]?, byte[]?>? AsymmetricHeaderCheck { get; set; }

    /// <summary>The channel id (0 until the server has assigned one).</summary>
    public uint ChannelId { get; set; }

    /// <summary>The token id put on outgoing MSG/CLO chunks.</summary>
    public uint SendTokenId { get; set; }

    /// <summary>Largest chunk the peer accepts, headers included (its ReceiveBufferSize).</summary>
    public int PeerReceiveBufferSize { get; set; } = 8192;

    /// <summary>Largest message body the peer accepts; 0 = no limit.</summary>
    public uint PeerMaxMessageSize { get; set; }

    /// <summary>Most chunks per message the peer accepts; 0 = no limit.</summary>
    public uint PeerMaxChunkCount { get; set; }

    /// <summary>Decides whether a received token id may be used (current token, or an old one within 125 % of its lifetime).</summary>
    public Func<uint, bool> IsTokenAccepted { get; set; } = _ => true;

    /// <summary>
    /// Whether chunks of different messages may arrive interleaved (default true, up to 16 messages at once). A server
    /// sets false: a chunk of another request while one is being reassembled is then BadTcpMessageTypeInvalid, which
    /// bounds what a peer can make it hold to one MaxMessageSize.
    /// </summary>
    public bool InterleavedMessagesAllowed { get; init; } = true;

    /// <summary>Status for an incoming message over a local limit: BadResponseTooLarge on a client, BadRequestTooLarge on a server.</summary>
    public StatusCode ReceiveTooLargeStatus { get; set; } = StatusCodes.BadResponseTooLarge;

    public uint LastSentSequenceNumber => _lastSentSequence;

    /// <summary>Sets the next sequence number to send (tests of the wrap).</summary>
    public void SetLastSentSequenceNumber(uint value) => _lastSentSequence = value;

    public static uint NextSequenceNumber(uint last) => last >= LegacyWrapLimit ? 1u : last + 1;

    public static bool IsNextSequenceNumber(uint last, uint received) =>
        received == unchecked(last + 1) || (last >= LegacyWrapLimit && received < 1024);

    /// <summary>Splits a message body into chunks (each a complete byte array ready to write).</summary>
    /// <param name="messageType">OPN, MSG or CLO.</param>
    /// <param name="requestId">The request id all chunks carry.</param>
    /// <param name="body">The encoded message (encoding NodeId + fields).</param>
    /// <param name="tooLargeStatus">Status when the message exceeds the peer's limits (BadRequestTooLarge or BadResponseTooLarge).</param>
    public List<byte[]> EncodeChunks(uint messageType, uint requestId, ReadOnlySpan<byte> body, StatusCode tooLargeStatus)
    {
        var asymmetric = messageType == TcpMessageType.OpenSecureChannel;
        var securityHeader = asymmetric ? Security.AsymmetricSecurityHeader() : null;
        var headerSize = 12 + (securityHeader?.Length ?? 4);
        var maxBodyPerChunk = Security.MaxBodySize(asymmetric, PeerReceiveBufferSize, headerSize);
        if (maxBodyPerChunk <= 0)
        {
            throw new ServiceResultException(StatusCodes.BadTcpInternalError, $"Peer receive buffer of {PeerReceiveBufferSize} bytes cannot hold a chunk header");
        }

        if (PeerMaxMessageSize != 0 && (uint)body.Length > PeerMaxMessageSize)
        {
            throw new ServiceResultException(tooLargeStatus, $"Message of {body.Length} bytes is over the peer's MaxMessageSize of {PeerMaxMessageSize}");
        }

        var chunkCount = Math.Max(1, (body.Length + maxBodyPerChunk - 1) / maxBodyPerChunk);
        if (PeerMaxChunkCount != 0 && (uint)chunkCount > PeerMaxChunkCount)
        {
            throw new ServiceResultException(tooLargeStatus, $"Message of {body.Length} bytes needs {chunkCount} chunks; the peer accepts {PeerMaxChunkCount}");
        }

        var chunks = new List<byte[]>(chunkCount);
        var header = new byte[headerSize];
        var plain = new byte[8 + Math.Min(maxBodyPerChunk, body.Length)];
        var offset = 0;
        for (var i = 0; i < chunkCount; i++)
        {
            var length = Math.Min(maxBodyPerChunk, body.Length - offset);
            var final = i == chunkCount - 1;
            var span = header.AsSpan();
            BinaryPrimitives.WriteUInt32LittleEndian(span, messageType | ((uint)(final ? TcpMessageType.Final : TcpMessageType.Intermediate) << 24));
            BinaryPrimitives.WriteUInt32LittleEndian(span[8..], ChannelId);
            if (securityHeader is not null)
            {
                securityHeader.CopyTo(span[12..]);
            }
            else
            {
                BinaryPrimitives.WriteUInt32LittleEndian(span[12..], SendTokenId);
            }

            _lastSentSequence = NextSequenceNumber(_lastSentSequence);
            BinaryPrimitives.WriteUInt32LittleEndian(plain, _lastSentSequence);
            BinaryPrimitives.WriteUInt32LittleEndian(plain.AsSpan(4), requestId);
            body.Slice(offset, length).CopyTo(plain.AsSpan(8));
            offset += length;
            chunks.Add(Security.Protect(asymmetric, SendTokenId, header, plain.AsSpan(0, 8 + length)));
        }

        return chunks;
    }

    /// <summary>
    /// Takes one received OPN/MSG/CLO chunk. Returns the message when its final or abort chunk arrived (or when it was
    /// dropped for a limit), otherwise null. Throws <see cref="UaDecodingException"/> for a channel-level violation.
    /// </summary>
    public ReceivedMessage? AddChunk(TcpFrame frame)
    {
        if (!TcpMessageType.IsSecureConversation(frame.MessageType))
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"{TcpMessageType.Name(frame.MessageType)} is not a secure conversation message");
        }

        var reader = new UaBinaryReader(frame.Buffer, TcpMessageType.HeaderSize, frame.Length - TcpMessageType.HeaderSize,
            new EncodingLimits { MaxStringLength = 256, MaxByteStringLength = 65536 });
        var channelId = reader.ReadUInt32();
        uint tokenId = 0;
        var asymmetric = frame.MessageType == TcpMessageType.OpenSecureChannel;
        if (asymmetric)
        {
            var policy = reader.ReadString();
            var senderCertificate = reader.ReadByteString();
            var thumbprint = reader.ReadByteString();
            if (ChannelId != 0 && channelId != ChannelId && channelId != 0)
            {
                throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, $"OPN for secure channel {channelId}; this channel is {ChannelId}");
            }

            (AsymmetricHeaderCheck ?? CheckAsymmetricHeader)(policy, senderCertificate, thumbprint);
        }
        else
        {
            if (channelId != ChannelId)
            {
                throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, $"Chunk for secure channel {channelId}; this channel is {ChannelId}");
            }

            tokenId = reader.ReadUInt32();
            if (!IsTokenAccepted(tokenId))
            {
                throw new UaDecodingException(StatusCodes.BadSecureChannelTokenUnknown, $"Security token {tokenId} of channel {channelId} is unknown or expired");
            }
        }

        // Decrypt and verify before the sequence header is read: it is inside the protected part.
        var plain = Security.Unprotect(asymmetric, tokenId, frame.Buffer, reader.Position, frame.Length);
        if (plain.Count < 8)
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, "Chunk is too short for its sequence header");
        }

        var buffer = plain.Array!;
        var sequence = BinaryPrimitives.ReadUInt32LittleEndian(buffer.AsSpan(plain.Offset));
        var requestId = BinaryPrimitives.ReadUInt32LittleEndian(buffer.AsSpan(plain.Offset + 4));
        if (_lastReceivedSequence is { } last && !IsNextSequenceNumber(last, sequence))
        {
            throw new UaDecodingException(StatusCodes.BadSequenceNumberInvalid, $"Sequence number {sequence} does not follow {last}");
        }

        _lastReceivedSequence = sequence;
        var bodyOffset = plain.Offset + 8;
        var bodyLength = plain.Count - 8;

        if (frame.ChunkType == TcpMessageType.Abort)
        {
            _partials.Remove(requestId);
            _discarding.Remove(requestId);
            var error = TcpError.Decode(buffer, bodyOffset, bodyLength);
            return new ReceivedMessage(frame.MessageType, requestId, tokenId, [], error.Error.IsBad ? error.Error : StatusCodes.BadCommunicationError, error.Reason);
        }

        var final = frame.ChunkType == TcpMessageType.Final;
        if (_discarding.Contains(requestId))
        {
            if (final)
            {
                _discarding.Remove(requestId);
            }

            return null;
        }

        if (!_partials.TryGetValue(requestId, out var partial))
        {
            if (!InterleavedMessagesAllowed && _partials.Count > 0)
            {
                throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"Chunk of request {requestId} interleaved with request {_partials.Keys.First()}");
            }

            if (final)
            {
                if (bodyLength > _local.MaxMessageSize)
                {
                    return TooLarge(frame.MessageType, requestId, tokenId, $"a {bodyLength}-byte message");
                }

                return new ReceivedMessage(frame.MessageType, requestId, tokenId, buffer.AsSpan(bodyOffset, bodyLength).ToArray(), StatusCodes.Good, null);
            }

            if (_partials.Count >= MaxPartialMessages)
            {
                throw new UaDecodingException(StatusCodes.BadTcpNotEnoughResources, $"More than {MaxPartialMessages} messages are being reassembled at once");
            }

            partial = new Partial(frame.MessageType);
            _partials[requestId] = partial;
        }

        partial.Chunks++;
        partial.Size += bodyLength;
        if (partial.Chunks > _local.MaxChunkCount || partial.Size > _local.MaxMessageSize)
        {
            _partials.Remove(requestId);
            if (!final)
            {
                _discarding.Add(requestId);
            }

            return TooLarge(frame.MessageType, requestId, tokenId, $"{partial.Chunks} chunks and {partial.Size} bytes");
        }

        partial.Bodies.Add(buffer.AsSpan(bodyOffset, bodyLength).ToArray());
        if (!final)
        {
            return null;
        }

        _partials.Remove(requestId);
        var body = new byte[partial.Size];
        var at = 0;
        foreach (var piece in partial.Bodies)
        {
            piece.CopyTo(body, at);
            at += piece.Length;
        }

        return new ReceivedMessage(frame.MessageType, requestId, tokenId, body, StatusCodes.Good, null);
    }

    private void CheckAsymmetricHeader(string? policy, byte[]? senderCertificate, byte[]? thumbprint)
    {
        if (!string.Equals(policy, Security.PolicyUri, StringComparison.Ordinal))
        {
            throw new UaDecodingException(StatusCodes.BadSecurityPolicyRejected, $"OPN uses security policy '{policy}'; this channel uses {Security.PolicyUri}");
        }

        if (!Security.IsSecure)
        {
            return;
        }

        var expected = Security.RemoteCertificateDer!;
        if (senderCertificate is null || senderCertificate.Length < expected.Length || !senderCertificate.AsSpan(0, expected.Length).SequenceEqual(expected))
        {
            throw new UaDecodingException(StatusCodes.BadCertificateInvalid, "OPN was signed with another certificate than the peer's");
        }

        if (thumbprint is null || !Security.IsLocalThumbprint(thumbprint))
        {
            throw new UaDecodingException(StatusCodes.BadCertificateInvalid, "OPN was encrypted for another certificate than ours");
        }
    }

    private ReceivedMessage TooLarge(uint messageType, uint requestId, uint tokenId, string what) =>
        new(messageType, requestId, tokenId, [], ReceiveTooLargeStatus,
            $"Message of request {requestId} reached {what}; the limits are {_local.MaxChunkCount} chunks and {_local.MaxMessageSize} bytes");

    private sealed class Partial(uint messageType)
    {
        public uint MessageType { get; } = messageType;

        public List<byte[]> Bodies { get; } = [];

        public int Chunks { get; set; }

        public long Size { get; set; }
    }
}
