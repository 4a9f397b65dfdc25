using System.Collections.Concurrent;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>
/// The client end of a UA TCP connection with a SecurityPolicy None secure channel: Hello/Acknowledge (waiting for
/// the ACK before anything else, docs/opcua.md §1.1), OpenSecureChannel Issue, Renew at 75 % of the revised lifetime,
/// requests matched to responses by request id with a local timeout each, and CloseSecureChannel. When the
/// connection fails every pending request fails with the reason and <see cref="Completion"/> completes.
/// </summary>
internal sealed class ClientSecureChannel : IAsyncDisposable
{
    private readonly ClientChannelSettings _settings;
    private readonly TimeProvider _time;
    private readonly SecureChannelCodec _codec;
    private readonly SecurityTokenSet _tokens;
    private readonly ConcurrentDictionary<uint, TaskCompletionSource<ReceivedMessage>> _pending = new();
    private readonly SemaphoreSlim _sendLock = new(1, 1);
    private readonly CancellationTokenSource _stop = new();
    private readonly TaskCompletionSource<ServiceResultException?> _completion = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private TcpClient? _tcp;
    private NetworkStream? _stream;
    private Task? _receiveLoop;
    private ITimer? _renewTimer;
    private uint _lastRequestId;
    private uint _lastRequestHandle;
    private int _closed;

    public ClientSecureChannel(ClientChannelSettings settings, TimeProvider time)
    {
        settings.Limits.Validate();
        _settings = settings;
        _time = time;
        _tokens = new SecurityTokenSet(time);
        _codec = new SecureChannelCodec(settings.Limits) { IsTokenAccepted = _tokens.IsAccepted, ReceiveTooLargeStatus = StatusCodes.BadResponseTooLarge };
    }

    /// <summary>Completes when the channel is closed or failed; the result is the failure, or null after a clean close.</summary>
    public Task<ServiceResultException?> Completion => _completion.Task;

    public bool IsOpen => _closed == 0 && _receiveLoop is not null;

    public uint ChannelId => _codec.ChannelId;

    public uint TokenId => _tokens.CurrentTokenId;

    public TimeSpan RevisedTokenLifetime => _tokens.CurrentLifetime;

    public TcpAcknowledge? Acknowledge { get; private set; }

    /// <summary>Raised after each successful token renewal with the new token id.</summary>
    public event Action<uint>? TokenRenewed;

    public uint NextRequestHandle() => Interlocked.Increment(ref _lastRequestHandle);

    public async Task OpenAsync(CancellationToken cancellationToken)
    {
        var url = _settings.EndpointUrl;
        if (!string.Equals(url.Scheme, "opc.tcp", StringComparison.OrdinalIgnoreCase))
        {
            throw new ServiceResultException(StatusCodes.BadTcpEndpointUrlInvalid, $"Endpoint URL '{url}' must start with opc.tcp://");
        }

        using var connectCts = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        connectCts.CancelAfter(_settings.ConnectTimeout);
        _tcp = new TcpClient { NoDelay = true };
        try
        {
            await _tcp.ConnectAsync(url.Host, url.Port < 0 ? 4840 : url.Port, connectCts.Token).ConfigureAwait(false);
            _stream = _tcp.GetStream();
            var limits = _settings.Limits;
            var hello = new TcpHello(0, (uint)limits.ReceiveBufferSize, (uint)limits.SendBufferSize, (uint)limits.MaxMessageSize, (uint)limits.MaxChunkCount, url.OriginalString);
            await _stream.WriteAsync(hello.Encode(), connectCts.Token).ConfigureAwait(false);
            var frame = await TcpFrameReader.ReadAsync(_stream, TcpFrameReader.MaxSizeBeforeHello, connectCts.Token).ConfigureAwait(false);
            if (frame.MessageType == TcpMessageType.Error)
            {
                var error = TcpError.Decode(frame);
                throw new ServiceResultException(error.Error, $"Server at {url} refused the connection: {error.Reason}");
            }

            if (frame.MessageType != TcpMessageType.Acknowledge)
            {
                throw new ServiceResultException(StatusCodes.BadTcpMessageTypeInvalid, $"Server at {url} answered Hello with {TcpMessageType.Name(frame.MessageType)}, expected ACK");
            }

            var ack = TcpAcknowledge.Decode(frame);
            if (ack.ReceiveBufferSize < 8192)
            {
                throw new ServiceResultException(StatusCodes.BadConnectionRejected, $"Server at {url} announced a receive buffer of {ack.ReceiveBufferSize} bytes; at least 8192 expected");
            }

            Acknowledge = ack;
            _codec.PeerReceiveBufferSize = (int)Math.Min(ack.ReceiveBufferSize, (uint)limits.SendBufferSize);
            _codec.PeerMaxMessageSize = ack.MaxMessageSize;
            _codec.PeerMaxChunkCount = ack.MaxChunkCount;
        }
        catch (OperationCanceledException) when (!cancellationToken.IsCancellationRequested)
        {
            _tcp.Dispose();
            throw new ServiceResultException(StatusCodes.BadTimeout, $"Connecting to {url} took longer than {_settings.ConnectTimeout}");
        }
        catch (SocketException ex)
        {
            _tcp.Dispose();
            throw new ServiceResultException(StatusCodes.BadNotConnected, $"Cannot connect to {url}: {ex.Message}", ex);
        }
        catch
        {
            _tcp.Dispose();
            throw;
        }

        _receiveLoop = Task.Run(ReceiveLoopAsync, CancellationToken.None);
        try
        {
            await OpenSecureChannelAsync(SecurityTokenRequestType.Issue, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception ex)
        {
            Fail(ex as ServiceResultException ?? new ServiceResultException(StatusCodes.BadCommunicationError, "OpenSecureChannel failed: " + ex.Message, ex));
            throw;
        }
    }

    private async Task OpenSecureChannelAsync(SecurityTokenRequestType type, CancellationToken cancellationToken)
    {
        var request = new OpenSecureChannelRequest
        {
            RequestHeader = NewHeader(NodeId.Null, _settings.ChannelRequestTimeout),
            ClientProtocolVersion = 0,
            RequestType = type,
            SecurityMode = MessageSecurityMode.None,
            ClientNonce = [],
            RequestedLifetime = (uint)_settings.RequestedTokenLifetime.TotalMilliseconds,
        };
        var message = await SendCoreAsync(TcpMessageType.OpenSecureChannel, request, _settings.ChannelRequestTimeout, cancellationToken).ConfigureAwait(false);
        var response = DecodeResponse<OpenSecureChannelResponse>(message, "OpenSecureChannel");
        var token = response.SecurityToken;
        if (type == SecurityTokenRequestType.Issue)
        {
            _codec.ChannelId = token.ChannelId;
        }
        else if (token.ChannelId != _codec.ChannelId)
        {
            throw new ServiceResultException(StatusCodes.BadSecureChannelIdInvalid, $"Renewal returned channel {token.ChannelId}, expected {_codec.ChannelId}");
        }

        var lifetime = TimeSpan.FromMilliseconds(Math.Max(1000u, token.RevisedLifetime));
        _tokens.Add(token.TokenId, lifetime);
        _codec.SendTokenId = token.TokenId;
        ScheduleRenewal(lifetime * 0.75);
        if (type == SecurityTokenRequestType.Renew)
        {
            TokenRenewed?.Invoke(token.TokenId);
        }
    }

    private void ScheduleRenewal(TimeSpan due)
    {
        _renewTimer?.Dispose();
        _renewTimer = _time.CreateTimer(_ => _ = RenewAsync(), null, due, Timeout.InfiniteTimeSpan);
    }

    private async Task RenewAsync()
    {
        if (_closed != 0)
        {
            return;
        }

        try
        {
            await OpenSecureChannelAsync(SecurityTokenRequestType.Renew, _stop.Token).ConfigureAwait(false);
        }
        catch (Exception ex)
        {
            // A channel whose token cannot be renewed is dead: fail it so that the owner reconnects.
            Fail(ex as ServiceResultException ?? new ServiceResultException(StatusCodes.BadSecureChannelClosed, "Token renewal failed: " + ex.Message, ex));
        }
    }

    public RequestHeader NewHeader(NodeId authenticationToken, TimeSpan timeoutHint) => new()
    {
        AuthenticationToken = authenticationToken,
        Timestamp = _time.GetUtcNow().UtcDateTime,
        RequestHandle = NextRequestHandle(),
        TimeoutHint = (uint)Math.Clamp(timeoutHint.TotalMilliseconds, 0, uint.MaxValue),
    };

    /// <summary>
    /// Sends a request and waits for its response, at most <paramref name="timeout"/>. Throws
    /// <see cref="ServiceResultException"/> for a ServiceFault, a Bad service result, a timeout (BadRequestTimeout) or
    /// a lost connection; <see cref="InvalidOperationException"/> for a request the read-only client may not send.
    /// </summary>
    /// <param name="request">The request, its header filled.</param>
    /// <param name="timeout">Local timeout.</param>
    /// <param name="cancellationToken">Cancels the wait.</param>
    /// <param name="completeOnReceiveThread">
    /// Continue the caller on the receive loop, so that responses are handled in the order they arrived (the publish
    /// loop needs this for sequence numbers). The caller must not block before its first await.
    /// </param>
    public async Task<TResponse> SendAsync<TResponse>(IServiceRequest request, TimeSpan timeout, CancellationToken cancellationToken, bool completeOnReceiveThread = false)
        where TResponse : class, IServiceResponse
    {
        var message = await SendCoreAsync(TcpMessageType.Message, request, timeout, cancellationToken, completeOnReceiveThread).ConfigureAwait(false);
        return DecodeResponse<TResponse>(message, ServiceName(request));
    }

    private static string ServiceName(IEncodeable request) => request.GetType().Name.Replace("Request", string.Empty, StringComparison.Ordinal);

    private async Task<ReceivedMessage> SendCoreAsync(uint messageType, IServiceRequest request, TimeSpan timeout, CancellationToken cancellationToken, bool inline = false)
    {
        if (!ClientServices.AllowedRequestIds.Contains(request.BinaryEncodingId))
        {
            throw new InvalidOperationException($"{request.GetType().Name} (encoding id {request.BinaryEncodingId}) may not be sent: the client is read-only towards the plant");
        }

        if (_closed != 0 || _stream is null)
        {
            throw new ServiceResultException(StatusCodes.BadSecureChannelClosed, $"{ServiceName(request)}: the secure channel is closed");
        }

        var body = MessageCodec.Encode(request, new EncodingLimits { MaxMessageSize = _settings.Limits.MaxMessageSize });
        var requestId = Interlocked.Increment(ref _lastRequestId);
        var tcs = new TaskCompletionSource<ReceivedMessage>(inline ? TaskCreationOptions.None : TaskCreationOptions.RunContinuationsAsynchronously);
        _pending[requestId] = tcs;
        try
        {
            await _sendLock.WaitAsync(cancellationToken).ConfigureAwait(false);
            try
            {
                var chunks = _codec.EncodeChunks(messageType, requestId, body, StatusCodes.BadRequestTooLarge);
                foreach (var chunk in chunks)
                {
                    await _stream.WriteAsync(chunk, _stop.Token).ConfigureAwait(false);
                }
            }
            catch (Exception ex) when (ex is IOException or ObjectDisposedException or OperationCanceledException && !cancellationToken.IsCancellationRequested)
            {
                var failure = new ServiceResultException(StatusCodes.BadConnectionClosed, $"{ServiceName(request)}: sending failed: {ex.Message}", ex);
                Fail(failure);
                throw failure;
            }
            finally
            {
                _sendLock.Release();
            }

            try
            {
                return await tcs.Task.WaitAsync(timeout, _time, cancellationToken).ConfigureAwait(false);
            }
            catch (TimeoutException)
            {
                throw new ServiceResultException(StatusCodes.BadRequestTimeout, $"{ServiceName(request)} got no response within {timeout}");
            }
        }
        finally
        {
            _pending.TryRemove(requestId, out _);
        }
    }

    private static TResponse DecodeResponse<TResponse>(ReceivedMessage message, string service)
        where TResponse : class, IServiceResponse
    {
        if (!message.IsGood)
        {
            throw new ServiceResultException(message.Status, $"{service}: the response was not received whole: {message.Reason}");
        }

        var decoded = MessageCodec.Decode(message.Body);
        if (decoded is ServiceFault fault)
        {
            throw new ServiceResultException(fault.ResponseHeader.ServiceResult, $"{service} failed");
        }

        if (decoded is not TResponse response)
        {
            throw new ServiceResultException(StatusCodes.BadUnknownResponse, $"{service}: expected {typeof(TResponse).Name}, received {decoded.GetType().Name}");
        }

        if (response.ResponseHeader.ServiceResult.IsBad)
        {
            throw new ServiceResultException(response.ResponseHeader.ServiceResult, $"{service} failed");
        }

        return response;
    }

    private async Task ReceiveLoopAsync()
    {
        try
        {
            while (!_stop.IsCancellationRequested)
            {
                var frame = await TcpFrameReader.ReadAsync(_stream!, _settings.Limits.ReceiveBufferSize, _stop.Token).ConfigureAwait(false);
                if (frame.MessageType == TcpMessageType.Error)
                {
                    var error = TcpError.Decode(frame);
                    Fail(new ServiceResultException(error.Error.IsBad ? error.Error : StatusCodes.BadCommunicationError, $"Server sent ERR: {error.Reason}"));
                    return;
                }

                if (frame.MessageType is not (TcpMessageType.OpenSecureChannel or TcpMessageType.Message))
                {
                    throw new UaDecodingException(StatusCodes.BadTcpMessageTypeInvalid, $"Unexpected {TcpMessageType.Name(frame.MessageType)} on an open channel");
                }

                var message = _codec.AddChunk(frame);
                if (message is { MessageType: TcpMessageType.OpenSecureChannel, IsGood: true })
                {
                    AcceptNewToken(message);
                }

                if (message is not null && _pending.TryGetValue(message.RequestId, out var tcs))
                {
                    tcs.TrySetResult(message);
                }
            }
        }
        catch (OperationCanceledException) when (_stop.IsCancellationRequested)
        {
            Fail(null);
        }
        catch (ServiceResultException ex)
        {
            Fail(ex);
        }
        catch (Exception ex) when (ex is IOException or ObjectDisposedException or SocketException)
        {
            Fail(new ServiceResultException(StatusCodes.BadConnectionClosed, "The connection failed: " + ex.Message, ex));
        }
    }

    /// <summary>
    /// Accepts a renewed token as soon as its OPN response is read, before the caller continues: the server may use
    /// it on the very next chunk.
    /// </summary>
    private void AcceptNewToken(ReceivedMessage message)
    {
        try
        {
            if (MessageCodec.Decode(message.Body) is OpenSecureChannelResponse { ResponseHeader.ServiceResult.IsBad: false } response)
            {
                _tokens.Add(response.SecurityToken.TokenId, TimeSpan.FromMilliseconds(Math.Max(1000u, response.SecurityToken.RevisedLifetime)));
            }
        }
        catch (UaDecodingException)
        {
            // The waiting OpenSecureChannel call decodes it again and reports the error.
        }
    }

    private void Fail(ServiceResultException? reason)
    {
        if (Interlocked.Exchange(ref _closed, 1) != 0)
        {
            return;
        }

        _renewTimer?.Dispose();
        _stop.Cancel();
        var failure = reason ?? new ServiceResultException(StatusCodes.BadSecureChannelClosed, "The secure channel was closed");
        foreach (var pending in _pending.Values)
        {
            pending.TrySetException(failure);
        }

        try
        {
            _tcp?.Dispose();
        }
        catch (SocketException)
        {
            // Closing a broken socket can throw; the channel is gone either way.
        }

        _completion.TrySetResult(reason);
    }

    /// <summary>Sends CloseSecureChannel (no response comes, docs/opcua.md §1.1) and closes the socket.</summary>
    public async Task CloseAsync()
    {
        if (_closed == 0 && _stream is not null)
        {
            try
            {
                var request = new CloseSecureChannelRequest { RequestHeader = NewHeader(NodeId.Null, TimeSpan.Zero) };
                var body = MessageCodec.Encode(request);
                using var cts = new CancellationTokenSource(_settings.ChannelRequestTimeout, _time);
                await _sendLock.WaitAsync(cts.Token).ConfigureAwait(false);
                try
                {
                    foreach (var chunk in _codec.EncodeChunks(TcpMessageType.CloseSecureChannel, Interlocked.Increment(ref _lastRequestId), body, StatusCodes.BadRequestTooLarge))
                    {
                        await _stream.WriteAsync(chunk, cts.Token).ConfigureAwait(false);
                    }
                }
                finally
                {
                    _sendLock.Release();
                }
            }
            catch (Exception ex) when (ex is IOException or ObjectDisposedException or OperationCanceledException or SocketException)
            {
                // The peer is already gone: nothing more to close politely.
            }
        }

        Fail(null);
        if (_receiveLoop is not null)
        {
            await _receiveLoop.ConfigureAwait(false);
        }
    }

    public async ValueTask DisposeAsync()
    {
        await CloseAsync().ConfigureAwait(false);
        _stop.Dispose();

        // _sendLock is deliberately not disposed: a send racing the close may still be between WaitAsync and Release,
        // and Release on a disposed semaphore throws. A SemaphoreSlim whose wait handle is never used holds nothing
        // that needs disposing.
    }
}
