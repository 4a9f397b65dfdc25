using System.Buffers.Binary;
using System.Net.Sockets;
using System.Threading.Channels;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// One client connection of the server: UA TCP (Hello/Acknowledge/Error, OPC 10000-6 §7.1) and UA Secure Conversation
/// with SecurityPolicy None (OPN/MSG/CLO chunks, §6.7). Every length is checked before allocating; input beyond a
/// limit is refused with an ERR message naming the status, and the socket is closed. Requests are handed to the
/// <see cref="ServerEngine"/>; responses may be sent from any thread.
/// </summary>
internal sealed class ServerConnection
{
    private const string NonePolicyUri = "http://opcfoundation.org/UA/SecurityPolicy#None";
    private const int HeaderSize = 8;
    private const int SymmetricOverhead = HeaderSize + 4 + 4 + 8;
    private const int MaxBytesBeforeHello = 4096;
    private const int MinBufferSize = 8192;

    private static readonly TimeSpan HelloTimeout = TimeSpan.FromSeconds(10);

    private readonly Socket _socket;
    private readonly NetworkStream _stream;
    private readonly ServerEngine _engine;
    private readonly ServerLimits _limits;
    private readonly Channel<byte[]> _outgoing = Channel.CreateUnbounded<byte[]>(new UnboundedChannelOptions { SingleReader = true });
    private readonly Lock _sendLock = new();
    private readonly CancellationTokenSource _closed = new();
    private readonly List<byte[]> _partialChunks = [];
    private int _partialBytes;
    private uint _partialRequestId;

    private bool _helloDone;
    private int _receiveBufferSize;
    private int _sendChunkSize;
    private uint _peerMaxMessageSize;
    private uint _peerMaxChunkCount;

    private uint _channelId;
    private uint _currentTokenId;
    private uint _previousTokenId;
    private uint _responseTokenId;
    private DateTime _tokenExpires = DateTime.MaxValue;
    private DateTime _previousTokenExpires = DateTime.MinValue;
    private bool _hasReceivedSequence;
    private uint _lastReceivedSequence;
    private uint _sendSequence;
    private int _closing;

    public ServerConnection(Socket socket, ServerEngine engine, ServerLimits limits)
    {
        _socket = socket;
        _stream = new NetworkStream(socket, ownsSocket: true);
        _engine = engine;
        _limits = limits;
    }

    /// <summary>The EndpointUrl the client gave in its Hello.</summary>
    public string? HelloEndpointUrl { get; private set; }

    public uint ChannelId => _channelId;

    public bool IsClosed => _closed.IsCancellationRequested;

    /// <summary>Reads and handles messages until the peer closes, an error closes the connection, or the server stops.</summary>
    public async Task RunAsync(CancellationToken stopping)
    {
        using var linked = CancellationTokenSource.CreateLinkedTokenSource(stopping, _closed.Token);
        var writer = WriteLoopAsync();
        try
        {
            await ReadLoopAsync(linked.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            // The server stops or the connection was closed on purpose.
        }
        catch (IOException)
        {
            // The peer went away.
        }
        catch (SocketException)
        {
            // The peer went away.
        }
        catch (ObjectDisposedException)
        {
            // Closed while reading.
        }
        catch (ProtocolViolation violation)
        {
            SendErrorAndClose(violation.Status, violation.Message);
        }
        catch (Exception e)
        {
            // Boundary of one connection: a defect must not take the server down; this connection ends, the others go on.
            SendErrorAndClose(StatusCodes.BadTcpInternalError, "internal error: " + e.Message);
        }
        finally
        {
            _outgoing.Writer.TryComplete();
            try
            {
                await writer.ConfigureAwait(false);
            }
            finally
            {
                Close();
                _engine.OnConnectionClosed(this);
            }
        }
    }

    /// <summary>Sends ERR to a connection the server will not serve, waits for it to be written, and closes.</summary>
    public async Task RefuseAsync(StatusCode status, string reason)
    {
        SendErrorAndClose(status, reason);
        await WriteLoopAsync().ConfigureAwait(false);
    }

    /// <summary>Closes the socket (queued messages are dropped unless the writer already sent them).</summary>
    public void Close()
    {
        if (Interlocked.Exchange(ref _closing, 1) == 0)
        {
            _outgoing.Writer.TryComplete();
        }
        if (!_closed.IsCancellationRequested)
        {
            _closed.Cancel();
            _stream.Dispose();
        }
    }

    /// <summary>Closes the channel when its token has expired without renewal (lifetime plus 25 %).</summary>
    public void CheckExpiry(DateTime now)
    {
        if (_channelId != 0 && now > _tokenExpires)
        {
            SendErrorAndClose(StatusCodes.BadSecureChannelClosed, "the secure channel token expired without renewal");
        }
    }

    /// <summary>Sends a service response as one or more MSG chunks (thread-safe).</summary>
    public void SendResponse(uint requestId, IServiceResponse response)
    {
        var body = EncodeBody(response);
        var maxBody = _sendChunkSize - SymmetricOverhead;
        var chunkCount = (body.Length + maxBody - 1) / maxBody;
        // 0 from the peer means "no limit": our own limit applies then (digest §5, MaxMessageSize 0).
        var maxMessage = _peerMaxMessageSize == 0 ? (uint)_limits.MaxMessageSize : Math.Min(_peerMaxMessageSize, (uint)_limits.MaxMessageSize);
        if (body.Length > maxMessage || (_peerMaxChunkCount != 0 && chunkCount > _peerMaxChunkCount))
        {
            var fault = new ServiceFault
            {
                ResponseHeader = new ResponseHeader
                {
                    Timestamp = response.ResponseHeader.Timestamp,
                    RequestHandle = response.ResponseHeader.RequestHandle,
                    ServiceResult = StatusCodes.BadResponseTooLarge,
                },
            };
            body = EncodeBody(fault);
            chunkCount = 1;
        }
        lock (_sendLock)
        {
            var token = _responseTokenId;
            for (var i = 0; i < chunkCount; i++)
            {
                var offset = i * maxBody;
                var length = Math.Min(maxBody, body.Length - offset);
                var chunk = new byte[SymmetricOverhead + length];
                WriteHeader(chunk, "MSG", i == chunkCount - 1 ? (byte)'F' : (byte)'C');
                BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(8), _channelId);
                BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(12), token);
                BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(16), NextSendSequence());
                BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(20), requestId);
                body.AsSpan(offset, length).CopyTo(chunk.AsSpan(SymmetricOverhead));
                _outgoing.Writer.TryWrite(chunk);
            }
        }
    }

    /// <summary>Sends an ERR message, then closes the socket once it is written.</summary>
    public void SendErrorAndClose(StatusCode status, string reason)
    {
        if (Interlocked.Exchange(ref _closing, 1) != 0)
        {
            return;
        }
        var writer = new UaBinaryWriter(64);
        writer.WriteUInt32(status.Code);
        writer.WriteString(reason.Length > 1024 ? reason[..1024] : reason);
        var payload = writer.ToArray();
        var message = new byte[HeaderSize + payload.Length];
        WriteHeader(message, "ERR", (byte)'F');
        payload.CopyTo(message, HeaderSize);
        _outgoing.Writer.TryWrite(message);
        _outgoing.Writer.TryComplete();
    }

    private async Task ReadLoopAsync(CancellationToken ct)
    {
        var header = new byte[HeaderSize];
        while (true)
        {
            if (!_helloDone)
            {
                using var helloTimeout = CancellationTokenSource.CreateLinkedTokenSource(ct);
                helloTimeout.CancelAfter(HelloTimeout);
                if (!await ReadExactlyOrEndAsync(header, helloTimeout.Token).ConfigureAwait(false))
                {
                    return;
                }
            }
            else if (!await ReadExactlyOrEndAsync(header, ct).ConfigureAwait(false))
            {
                return;
            }
            var type = System.Text.Encoding.ASCII.GetString(header, 0, 3);
            var chunkType = header[3];
            var size = BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(4));
            var limit = _helloDone ? (uint)_receiveBufferSize : MaxBytesBeforeHello;
            if (type is not ("HEL" or "OPN" or "MSG" or "CLO") || chunkType is not ((byte)'F' or (byte)'C' or (byte)'A'))
            {
                throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, $"message type {Printable(header)} is not HEL, OPN, MSG or CLO with chunk type F, C or A");
            }
            if (size > limit)
            {
                throw new ProtocolViolation(StatusCodes.BadTcpMessageTooLarge, $"message size {size} exceeds the limit of {limit} bytes");
            }
            if (size < HeaderSize + 8)
            {
                throw new ProtocolViolation(StatusCodes.BadDecodingError, $"message size {size} is too small for a {type} message");
            }
            var body = new byte[size - HeaderSize];
            if (!await ReadExactlyOrEndAsync(body, ct).ConfigureAwait(false))
            {
                return;
            }
            if (type == "HEL")
            {
                OnHello(body, chunkType);
                continue;
            }
            if (!_helloDone)
            {
                throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, $"{type} before Hello");
            }
            switch (type)
            {
                case "OPN":
                    OnOpen(body, chunkType);
                    break;
                case "CLO":
                    CheckSymmetricHeader(body);
                    return;
                default:
                    OnMessageChunk(body, chunkType);
                    break;
            }
        }
    }

    private void OnHello(byte[] body, byte chunkType)
    {
        if (_helloDone)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, "a second Hello on the same connection");
        }
        if (chunkType != (byte)'F')
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, "Hello must be a final chunk");
        }
        try
        {
            var reader = new UaBinaryReader(body, new EncodingLimits { MaxStringLength = MaxBytesBeforeHello });
            _ = reader.ReadUInt32();
            var peerReceive = reader.ReadUInt32();
            var peerSend = reader.ReadUInt32();
            _peerMaxMessageSize = reader.ReadUInt32();
            _peerMaxChunkCount = reader.ReadUInt32();
            HelloEndpointUrl = reader.ReadString();
            if (peerReceive < MinBufferSize || peerSend < MinBufferSize)
            {
                throw new ProtocolViolation(StatusCodes.BadConnectionRejected, $"buffer sizes {peerReceive}/{peerSend} are below the minimum of {MinBufferSize} bytes");
            }
            _receiveBufferSize = (int)Math.Min(peerSend, (uint)_limits.ReceiveBufferSize);
            _sendChunkSize = (int)Math.Min(peerReceive, (uint)_limits.SendBufferSize);
        }
        catch (UaDecodingException e)
        {
            throw new ProtocolViolation(e.Status.IsBad && e.Status.Is(StatusCodes.BadEncodingLimitsExceeded) ? StatusCodes.BadTcpEndpointUrlInvalid : StatusCodes.BadDecodingError, "Hello: " + e.Message);
        }
        _helloDone = true;
        var ack = new byte[HeaderSize + 20];
        WriteHeader(ack, "ACK", (byte)'F');
        BinaryPrimitives.WriteUInt32LittleEndian(ack.AsSpan(8), 0);
        BinaryPrimitives.WriteUInt32LittleEndian(ack.AsSpan(12), (uint)_receiveBufferSize);
        BinaryPrimitives.WriteUInt32LittleEndian(ack.AsSpan(16), (uint)_sendChunkSize);
        BinaryPrimitives.WriteUInt32LittleEndian(ack.AsSpan(20), (uint)_limits.MaxMessageSize);
        BinaryPrimitives.WriteUInt32LittleEndian(ack.AsSpan(24), (uint)_limits.MaxChunkCount);
        _outgoing.Writer.TryWrite(ack);
    }

    private void OnOpen(byte[] body, byte chunkType)
    {
        if (chunkType != (byte)'F')
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, "OpenSecureChannel must fit in one final chunk");
        }
        OpenSecureChannelRequest request;
        uint requestId;
        try
        {
            var reader = new UaBinaryReader(body, _limits.Encoding);
            var channelId = reader.ReadUInt32();
            var policy = reader.ReadString();
            _ = reader.ReadByteString();
            _ = reader.ReadByteString();
            var sequence = reader.ReadUInt32();
            requestId = reader.ReadUInt32();
            if (!string.Equals(policy, NonePolicyUri, StringComparison.Ordinal))
            {
                throw new ProtocolViolation(StatusCodes.BadSecurityPolicyRejected, $"security policy '{policy}' is not supported (only {NonePolicyUri})");
            }
            if (_channelId != 0 && channelId != _channelId)
            {
                throw new ProtocolViolation(StatusCodes.BadTcpSecureChannelUnknown, $"secure channel {channelId} is not this connection's ({_channelId})");
            }
            CheckSequence(sequence);
            var typeId = reader.ReadNodeId();
            if (typeId != new NodeId(OpenSecureChannelRequest.EncodingId))
            {
                throw new ProtocolViolation(StatusCodes.BadDecodingError, $"OPN carries {typeId}, expected an OpenSecureChannelRequest (i=446)");
            }
            request = new OpenSecureChannelRequest();
            request.Decode(reader);
        }
        catch (UaDecodingException e)
        {
            throw new ProtocolViolation(StatusCodes.BadDecodingError, "OpenSecureChannel: " + e.Message);
        }
        if (request.SecurityMode != MessageSecurityMode.None)
        {
            throw new ProtocolViolation(StatusCodes.BadSecurityModeRejected, $"security mode {request.SecurityMode} is not supported (only None)");
        }
        var now = _engine.Now;
        if (request.RequestType == SecurityTokenRequestType.Issue)
        {
            if (_channelId != 0)
            {
                throw new ProtocolViolation(StatusCodes.BadTcpSecureChannelUnknown, "a second Issue on an open secure channel");
            }
            _channelId = _engine.NextChannelId();
        }
        else if (_channelId == 0)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpSecureChannelUnknown, "Renew before the secure channel was issued");
        }
        var lifetime = request.RequestedLifetime == 0 ? 600_000u : Math.Clamp(request.RequestedLifetime, 1_000u, 3_600_000u);
        lock (_sendLock)
        {
            _previousTokenId = _currentTokenId;
            _previousTokenExpires = _tokenExpires;
            _currentTokenId++;
            if (request.RequestType == SecurityTokenRequestType.Issue)
            {
                _responseTokenId = _currentTokenId;
            }
            _tokenExpires = now.AddMilliseconds(lifetime * 1.25);
        }
        var response = new OpenSecureChannelResponse
        {
            ResponseHeader = new ResponseHeader { Timestamp = now, RequestHandle = request.RequestHeader.RequestHandle },
            ServerProtocolVersion = 0,
            SecurityToken = new ChannelSecurityToken { ChannelId = _channelId, TokenId = _currentTokenId, CreatedAt = now, RevisedLifetime = lifetime },
            ServerNonce = [],
        };
        var responseBody = EncodeBody(response);
        var writer = new UaBinaryWriter(responseBody.Length + 128);
        var placeholder = writer.GetSpan(HeaderSize);
        placeholder.Clear();
        writer.WriteUInt32(_channelId);
        writer.WriteString(NonePolicyUri);
        writer.WriteByteString(null);
        writer.WriteByteString(null);
        lock (_sendLock)
        {
            writer.WriteUInt32(NextSendSequence());
            writer.WriteUInt32(requestId);
            responseBody.CopyTo(writer.GetSpan(responseBody.Length));
            var message = writer.ToArray();
            WriteHeader(message, "OPN", (byte)'F');
            _outgoing.Writer.TryWrite(message);
        }
    }

    private (uint TokenId, uint Sequence, uint RequestId) CheckSymmetricHeader(byte[] body)
    {
        if (body.Length < 16)
        {
            throw new ProtocolViolation(StatusCodes.BadDecodingError, $"a {body.Length + HeaderSize}-byte chunk is too small for the symmetric headers");
        }
        var channelId = BinaryPrimitives.ReadUInt32LittleEndian(body);
        var tokenId = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(4));
        var sequence = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(8));
        var requestId = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(12));
        if (_channelId == 0 || channelId != _channelId)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpSecureChannelUnknown, $"secure channel {channelId} is unknown");
        }
        var now = _engine.Now;
        if (tokenId == _currentTokenId)
        {
            _responseTokenId = _currentTokenId;
        }
        else if (!(tokenId == _previousTokenId && tokenId != 0 && now <= _previousTokenExpires))
        {
            throw new ProtocolViolation(StatusCodes.BadSecureChannelTokenUnknown, $"token {tokenId} is not valid on secure channel {_channelId}");
        }
        CheckSequence(sequence);
        return (tokenId, sequence, requestId);
    }

    private void CheckSequence(uint sequence)
    {
        if (_hasReceivedSequence)
        {
            var expected = unchecked(_lastReceivedSequence + 1);
            // Legacy (RSA and None) numbering wraps after 4 294 966 271 to a value below 1024 (OPC 10000-6 §6.7.2.4).
            var wrapped = _lastReceivedSequence >= 4_294_966_271u && sequence < 1024;
            if (sequence != expected && !wrapped)
            {
                throw new ProtocolViolation(StatusCodes.BadSequenceNumberInvalid, $"sequence number {sequence} does not follow {_lastReceivedSequence}");
            }
        }
        _hasReceivedSequence = true;
        _lastReceivedSequence = sequence;
    }

    private void OnMessageChunk(byte[] body, byte chunkType)
    {
        var (_, _, requestId) = CheckSymmetricHeader(body);
        if (chunkType == (byte)'A')
        {
            _partialChunks.Clear();
            _partialBytes = 0;
            return;
        }
        if (_partialChunks.Count > 0 && requestId != _partialRequestId)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTypeInvalid, $"chunk of request {requestId} interleaved with request {_partialRequestId}");
        }
        var payloadLength = body.Length - 16;
        if (_partialChunks.Count + 1 > _limits.MaxChunkCount)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTooLarge, $"request {requestId} exceeds {_limits.MaxChunkCount} chunks");
        }
        if ((long)_partialBytes + payloadLength > _limits.MaxMessageSize)
        {
            throw new ProtocolViolation(StatusCodes.BadTcpMessageTooLarge, $"request {requestId} exceeds the message size limit of {_limits.MaxMessageSize} bytes");
        }
        _partialRequestId = requestId;
        if (chunkType == (byte)'C')
        {
            _partialChunks.Add(body);
            _partialBytes += payloadLength;
            return;
        }
        byte[] message;
        if (_partialChunks.Count == 0)
        {
            message = body;
        }
        else
        {
            _partialChunks.Add(body);
            message = new byte[_partialBytes + payloadLength + 16];
            var at = 16;
            foreach (var chunk in _partialChunks)
            {
                chunk.AsSpan(16).CopyTo(message.AsSpan(at));
                at += chunk.Length - 16;
            }
            _partialChunks.Clear();
            _partialBytes = 0;
        }
        DispatchMessage(message, requestId);
    }

    private void DispatchMessage(byte[] message, uint requestId)
    {
        IServiceRequest request;
        try
        {
            var reader = new UaBinaryReader(message, 16, message.Length - 16, _limits.Encoding);
            var typeId = reader.ReadNodeId();
            if (typeId.NamespaceIndex != 0 || typeId.IdType != NodeIdType.Numeric ||
                !EncodeableTypes.TryCreate(typeId.NumericIdentifier, out var encodeable) || encodeable is not IServiceRequest serviceRequest)
            {
                SendFault(requestId, 0, StatusCodes.BadServiceUnsupported);
                return;
            }
            if (serviceRequest is CloseSecureChannelRequest)
            {
                Close();
                return;
            }
            serviceRequest.Decode(reader);
            request = serviceRequest;
        }
        catch (UaDecodingException e)
        {
            SendFault(requestId, 0, e.Status.IsBad ? e.Status : StatusCodes.BadDecodingError);
            return;
        }
        _engine.Handle(this, requestId, request);
    }

    private void SendFault(uint requestId, uint requestHandle, StatusCode status) =>
        SendResponse(requestId, new ServiceFault
        {
            ResponseHeader = new ResponseHeader { Timestamp = _engine.Now, RequestHandle = requestHandle, ServiceResult = status },
        });

    private async Task WriteLoopAsync()
    {
        try
        {
            await foreach (var message in _outgoing.Reader.ReadAllAsync().ConfigureAwait(false))
            {
                using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(10));
                await _stream.WriteAsync(message, timeout.Token).ConfigureAwait(false);
            }
        }
        catch (Exception e) when (e is IOException or SocketException or ObjectDisposedException or OperationCanceledException)
        {
            // The peer is gone or does not read: the connection is closed below.
        }
        finally
        {
            Close();
        }
    }

    private async Task<bool> ReadExactlyOrEndAsync(byte[] buffer, CancellationToken ct)
    {
        var read = 0;
        while (read < buffer.Length)
        {
            var n = await _stream.ReadAsync(buffer.AsMemory(read), ct).ConfigureAwait(false);
            if (n == 0)
            {
                return false;
            }
            read += n;
        }
        return true;
    }

    private uint NextSendSequence()
    {
        _sendSequence = _sendSequence >= 4_294_966_271u ? 1 : _sendSequence + 1;
        return _sendSequence;
    }

    private static byte[] EncodeBody(IEncodeable value)
    {
        var writer = new UaBinaryWriter(256);
        writer.WriteNodeId(new NodeId(value.BinaryEncodingId));
        value.Encode(writer);
        return writer.ToArray();
    }

    private static void WriteHeader(byte[] message, string type, byte chunkType)
    {
        message[0] = (byte)type[0];
        message[1] = (byte)type[1];
        message[2] = (byte)type[2];
        message[3] = chunkType;
        BinaryPrimitives.WriteUInt32LittleEndian(message.AsSpan(4), (uint)message.Length);
    }

    private static string Printable(byte[] header) =>
        new([.. header.Take(4).Select(b => b is >= 32 and < 127 ? (char)b : '?')]);

    /// <summary>A channel-level failure: answered with ERR and the socket is closed.</summary>
    private sealed class ProtocolViolation(StatusCode status, string message) : Exception(message)
    {
        public StatusCode Status { get; } = status;
    }
}
