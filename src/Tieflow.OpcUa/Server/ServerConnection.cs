using System.Buffers.Binary;
using System.Net.Sockets;
using System.Threading.Channels;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// One client connection of the server: UA TCP (Hello/Acknowledge/Error, OPC 10000-6 §7.1) and UA Secure Conversation
/// with SecurityPolicy None (OPN/MSG/CLO chunks, §6.7). Framing, the Hello negotiation, chunk splitting and
/// reassembly, limits, sequence numbers and tokens are the shared Transport types (<see cref="TcpFrameReader"/>,
/// <see cref="TcpAcknowledge.Accept"/>, <see cref="SecureChannelCodec"/>, <see cref="SecurityTokenSet"/>); this class
/// adds the server's rules on top: Hello first and once, OPN in one final chunk, Issue/Renew, one message reassembled
/// at a time. Input beyond a limit is refused with an ERR message naming the status, and the socket is closed.
/// Requests are handed to the <see cref="ServerEngine"/>; responses may be sent from any thread.
/// </summary>
internal sealed class ServerConnection
{
    private const int MaxReasonLength = 1024;

    private static readonly TimeSpan HelloTimeout = TimeSpan.FromSeconds(10);

    private readonly NetworkStream _stream;
    private readonly ServerEngine _engine;
    private readonly ServerLimits _limits;
    private readonly SecureChannelCodec _codec;
    private readonly SecurityTokenSet _tokens;
    private readonly Channel<byte[]> _outgoing = Channel.CreateUnbounded<byte[]>(new UnboundedChannelOptions { SingleReader = true });
    private readonly Lock _sendLock = new();
    private readonly CancellationTokenSource _closed = new();

    private bool _helloDone;
    private int _receiveBufferSize = TcpFrameReader.MaxSizeBeforeHello;
    private uint _lastTokenId;
    private int _closing;

    public ServerConnection(Socket socket, ServerEngine engine, ServerLimits limits)
    {
        _stream = new NetworkStream(socket, ownsSocket: true);
        _engine = engine;
        _limits = limits;
        _tokens = new SecurityTokenSet(engine.Time);
        _codec = new SecureChannelCodec(limits.Transport)
        {
            IsTokenAccepted = _tokens.IsAccepted,
            ReceiveTooLargeStatus = StatusCodes.BadTcpMessageTooLarge,
            InterleavedMessagesAllowed = false,
        };
    }

    /// <summary>The EndpointUrl the client gave in its Hello.</summary>
    public string? HelloEndpointUrl { get; private set; }

    public uint ChannelId => _codec.ChannelId;

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
        catch (UaDecodingException violation)
        {
            // A channel-level failure (the codec's and this class's checks): ERR naming the status, then close.
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
    public void CheckExpiry()
    {
        if (_codec.ChannelId != 0 && _tokens.IsCurrentExpired())
        {
            SendErrorAndClose(StatusCodes.BadSecureChannelClosed, "the secure channel token expired without renewal");
        }
    }

    /// <summary>Sends a service response as one or more MSG chunks (thread-safe).</summary>
    public void SendResponse(uint requestId, IServiceResponse response)
    {
        var body = MessageCodec.Encode(response);
        lock (_sendLock)
        {
            List<byte[]> chunks;
            try
            {
                chunks = _codec.EncodeChunks(TcpMessageType.Message, requestId, body, StatusCodes.BadResponseTooLarge);
            }
            catch (ServiceResultException e) when (e.Status == StatusCodes.BadResponseTooLarge)
            {
                // Over the peer's MaxMessageSize / MaxChunkCount (or our own MaxMessageSize): that request gets a fault.
                var fault = new ServiceFault
                {
                    ResponseHeader = new ResponseHeader
                    {
                        Timestamp = response.ResponseHeader.Timestamp,
                        RequestHandle = response.ResponseHeader.RequestHandle,
                        ServiceResult = StatusCodes.BadResponseTooLarge,
                    },
                };
                chunks = _codec.EncodeChunks(TcpMessageType.Message, requestId, MessageCodec.Encode(fault), StatusCodes.BadResponseTooLarge);
            }
            foreach (var chunk in chunks)
            {
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
        _outgoing.Writer.TryWrite(new TcpError(status, reason.Length > MaxReasonLength ? reason[..MaxReasonLength] : reason).Encode());
        _outgoing.Writer.TryComplete();
    }

    private async Task ReadLoopAsync(CancellationToken ct)
    {
        while (true)
        {
            TcpFrame frame;
            try
            {
                if (!_helloDone)
                {
                    using var helloTimeout = CancellationTokenSource.CreateLinkedTokenSource(ct);
                    helloTimeout.CancelAfter(HelloTimeout);
                    frame = await TcpFrameReader.ReadAsync(_stream, _receiveBufferSize, helloTimeout.Token).ConfigureAwait(false);
                }
                else
                {
                    frame = await TcpFrameReader.ReadAsync(_stream, _receiveBufferSize, ct).ConfigureAwait(false);
                }
            }
            catch (ServiceResultException e) when (e is not UaDecodingException && e.Status == StatusCodes.BadConnectionClosed)
            {
                // The peer went away (or closed its sending side).
                return;
            }
            switch (frame.MessageType)
            {
                case TcpMessageType.Hello:
                    OnHello(frame);
                    break;
                case TcpMessageType.OpenSecureChannel or TcpMessageType.Message or TcpMessageType.CloseSecureChannel when !_helloDone:
                    throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"{TcpMessageType.Name(frame.MessageType)} before Hello");
                case TcpMessageType.OpenSecureChannel:
                    OnOpen(frame);
                    break;
                case TcpMessageType.Message:
                    OnMessageChunk(frame);
                    break;
                case TcpMessageType.CloseSecureChannel:
                    // Checked like any chunk (channel, token, sequence), then the connection ends.
                    RequireChannel(frame);
                    _ = _codec.AddChunk(frame);
                    return;
                default:
                    throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"message type {TcpMessageType.Name(frame.MessageType)} is not HEL, OPN, MSG or CLO");
            }
        }
    }

    private void OnHello(TcpFrame frame)
    {
        if (_helloDone)
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, "a second Hello on the same connection");
        }
        TcpHello hello;
        TcpAcknowledge ack;
        try
        {
            hello = TcpHello.Decode(frame);
            HelloEndpointUrl = hello.EndpointUrl.Length == 0 ? null : hello.EndpointUrl;
            ack = TcpAcknowledge.Accept(hello, _limits.Transport);
        }
        catch (UaDecodingException e) when (!IsNamedHelloStatus(e.Status))
        {
            throw new UaDecodingException(StatusCodes.BadDecodingError, "Hello: " + e.Message);
        }
        _receiveBufferSize = (int)ack.ReceiveBufferSize;
        _codec.PeerReceiveBufferSize = (int)ack.SendBufferSize;
        // 0 from the peer means "no limit": our own limit applies then (docs/opcua.md §5, MaxMessageSize 0); the codec refuses
        // a response over this and SendResponse answers BadResponseTooLarge instead.
        _codec.PeerMaxMessageSize = Math.Min(hello.MaxMessageSize == 0 ? uint.MaxValue : hello.MaxMessageSize, (uint)_limits.Transport.MaxMessageSize);
        _codec.PeerMaxChunkCount = hello.MaxChunkCount;
        _helloDone = true;
        _outgoing.Writer.TryWrite(ack.Encode());
    }

    private void OnOpen(TcpFrame frame)
    {
        if (frame.ChunkType != TcpMessageType.Final)
        {
            throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, "OpenSecureChannel must fit in one final chunk");
        }
        // The codec checks the headers (policy, channel id, sequence number) before this reads the channel id again.
        var message = _codec.AddChunk(frame)!;
        var channelId = BinaryPrimitives.ReadUInt32LittleEndian(frame.Buffer.AsSpan(TcpMessageType.HeaderSize));
        if (_codec.ChannelId != 0 && channelId != _codec.ChannelId)
        {
            // The codec lets a Renew name channel 0; this server does not.
            throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, $"secure channel {channelId} is not this connection's ({_codec.ChannelId})");
        }
        if (!message.IsGood)
        {
            throw new UaDecodingException(message.Status, message.Reason ?? "the OpenSecureChannel request exceeds the server's limits");
        }
        OpenSecureChannelRequest request;
        try
        {
            var reader = new UaBinaryReader(message.Body, _limits.Encoding);
            var typeId = reader.ReadNodeId();
            if (typeId != new NodeId(OpenSecureChannelRequest.EncodingId))
            {
                throw new UaDecodingException(StatusCodes.BadDecodingError, $"OPN carries {typeId}, expected an OpenSecureChannelRequest (i=446)");
            }
            request = new OpenSecureChannelRequest();
            request.Decode(reader);
        }
        catch (UaDecodingException e)
        {
            throw new UaDecodingException(StatusCodes.BadDecodingError, "OpenSecureChannel: " + e.Message);
        }
        if (request.SecurityMode != MessageSecurityMode.None)
        {
            throw new UaDecodingException(StatusCodes.BadSecurityModeRejected, $"security mode {request.SecurityMode} is not supported (only None)");
        }
        var issue = request.RequestType == SecurityTokenRequestType.Issue;
        if (issue && _codec.ChannelId != 0)
        {
            throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, "a second Issue on an open secure channel");
        }
        if (!issue && _codec.ChannelId == 0)
        {
            throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, "Renew before the secure channel was issued");
        }
        var lifetime = request.RequestedLifetime == 0 ? 600_000u : Math.Clamp(request.RequestedLifetime, 1_000u, 3_600_000u);
        var tokenId = ++_lastTokenId;
        _tokens.Add(tokenId, TimeSpan.FromMilliseconds(lifetime));
        var now = _engine.Now;
        lock (_sendLock)
        {
            if (issue)
            {
                _codec.ChannelId = _engine.NextChannelId();
                // A renewed token is used for responses only once the client has used it (docs/opcua.md §1.12).
                _codec.SendTokenId = tokenId;
            }
            var response = new OpenSecureChannelResponse
            {
                ResponseHeader = new ResponseHeader { Timestamp = now, RequestHandle = request.RequestHeader.RequestHandle },
                ServerProtocolVersion = 0,
                SecurityToken = new ChannelSecurityToken { ChannelId = _codec.ChannelId, TokenId = tokenId, CreatedAt = now, RevisedLifetime = lifetime },
                ServerNonce = [],
            };
            foreach (var chunk in _codec.EncodeChunks(TcpMessageType.OpenSecureChannel, message.RequestId, MessageCodec.Encode(response), StatusCodes.BadResponseTooLarge))
            {
                _outgoing.Writer.TryWrite(chunk);
            }
        }
    }

    private void RequireChannel(TcpFrame frame)
    {
        if (_codec.ChannelId == 0)
        {
            var channelId = frame.Length >= TcpMessageType.HeaderSize + 4 ? BinaryPrimitives.ReadUInt32LittleEndian(frame.Buffer.AsSpan(TcpMessageType.HeaderSize)) : 0;
            throw new UaDecodingException(StatusCodes.BadTcpSecureChannelUnknown, $"secure channel {channelId} is unknown");
        }
    }

    private void OnMessageChunk(TcpFrame frame)
    {
        RequireChannel(frame);
        var message = _codec.AddChunk(frame);
        // Secure every response with the newest token the client has used (docs/opcua.md §1.12).
        var tokenId = BinaryPrimitives.ReadUInt32LittleEndian(frame.Buffer.AsSpan(TcpMessageType.HeaderSize + 4));
        if (tokenId == _tokens.CurrentTokenId)
        {
            lock (_sendLock)
            {
                _codec.SendTokenId = tokenId;
            }
        }
        if (message is null || frame.ChunkType == TcpMessageType.Abort)
        {
            // An intermediate chunk, or the client aborted the message: nothing to answer.
            return;
        }
        if (!message.IsGood)
        {
            throw new UaDecodingException(message.Status, message.Reason ?? "the request exceeds the server's limits");
        }
        DispatchMessage(message);
    }

    private void DispatchMessage(ReceivedMessage message)
    {
        var requestId = message.RequestId;
        IServiceRequest request;
        try
        {
            var reader = new UaBinaryReader(message.Body, _limits.Encoding);
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

    private static bool IsNamedHelloStatus(StatusCode status) =>
        status == StatusCodes.BadConnectionRejected || status == StatusCodes.BadTcpEndpointUrlInvalid;
}
