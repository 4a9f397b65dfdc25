using System.Net;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Fakes;

/// <summary>
/// A minimal UA TCP / secure channel peer for tests, built on the library's framing (TcpFrameReader,
/// SecureChannelCodec). Each request is handed to <see cref="Handler"/>; returning null parks the request (no
/// answer), which lets tests provoke timeouts. Not the product server: that lives in Tieflow.OpcUa/Server.
/// </summary>
internal sealed class LoopbackServer : IAsyncDisposable
{
    private readonly TcpListener _listener;
    private readonly CancellationTokenSource _stop = new();
    private readonly List<Connection> _connections = [];
    private readonly Task _acceptLoop;
    private uint _nextChannelId = 1;

    public LoopbackServer(TransportLimits? limits = null, int port = 0)
    {
        Limits = limits ?? TransportLimits.Default;
        _listener = new TcpListener(IPAddress.Loopback, port);
        _listener.Server.SetSocketOption(SocketOptionLevel.Socket, SocketOptionName.ReuseAddress, true);
        _listener.Start();
        Port = ((IPEndPoint)_listener.LocalEndpoint).Port;
        _acceptLoop = Task.Run(AcceptLoopAsync);
    }

    public TransportLimits Limits { get; }

    public int Port { get; }

    public Uri Url => new($"opc.tcp://127.0.0.1:{Port}/test");

    public uint RevisedLifetimeMs { get; set; } = 600_000;

    /// <summary>False to send responses over the client's MaxMessageSize anyway (a misbehaving peer).</summary>
    public bool HonourClientMessageSize { get; set; } = true;

    /// <summary>Answers a request; null parks it.</summary>
    public Func<IServiceRequest, IServiceResponse?> Handler { get; set; } = _ => null;

    /// <summary>
    /// When set, used instead of <see cref="Handler"/>: gets the request and a function that answers it later (for
    /// parked Publish requests); returns a response to answer at once, or null.
    /// </summary>
    public Func<IServiceRequest, Func<IServiceResponse, Task>, IServiceResponse?>? DeferringHandler { get; set; }

    private readonly List<IServiceRequest> _received = [];

    /// <summary>A copy of every request received so far, in order (OPN included).</summary>
    public IReadOnlyList<IServiceRequest> Received
    {
        get
        {
            lock (_received)
            {
                return [.. _received];
            }
        }
    }

    private readonly List<uint> _tokensSeen = [];

    /// <summary>A copy of every token id seen on incoming MSG chunks.</summary>
    public IReadOnlyList<uint> TokensSeen
    {
        get
        {
            lock (_tokensSeen)
            {
                return [.. _tokensSeen];
            }
        }
    }

    public int HelloCount { get; private set; }

    /// <summary>Drops every connection abruptly (RST-like close) without stopping the listener.</summary>
    public void DropConnections()
    {
        lock (_connections)
        {
            foreach (var c in _connections)
            {
                try
                {
                    c.Client.Client?.LingerState = new LingerOption(true, 0);
                }
                catch (ObjectDisposedException)
                {
                    // Already closed by the client.
                }

                c.Client.Dispose();
            }

            _connections.Clear();
        }
    }

    private async Task AcceptLoopAsync()
    {
        while (!_stop.IsCancellationRequested)
        {
            TcpClient client;
            try
            {
                client = await _listener.AcceptTcpClientAsync(_stop.Token);
            }
            catch (Exception ex) when (ex is OperationCanceledException or SocketException or ObjectDisposedException)
            {
                return;
            }

            var connection = new Connection(client, this);
            lock (_connections)
            {
                _connections.Add(connection);
            }

            _ = Task.Run(connection.RunAsync);
        }
    }

    public async ValueTask DisposeAsync()
    {
        _stop.Cancel();
        _listener.Stop();
        DropConnections();
        await _acceptLoop;
        _stop.Dispose();
    }

    private sealed class Connection(TcpClient client, LoopbackServer server)
    {
        private readonly SemaphoreSlim _sendLock = new(1, 1);
        private SecureChannelCodec? _codec;

        public TcpClient Client { get; } = client;

        public async Task RunAsync()
        {
            try
            {
                var stream = Client.GetStream();
                var hello = await TcpFrameReader.ReadAsync(stream, TcpFrameReader.MaxSizeBeforeHello, server._stop.Token);
                var h = TcpHello.Decode(hello);
                server.HelloCount++;
                var limits = server.Limits;
                var ack = new TcpAcknowledge(0, (uint)Math.Min(limits.ReceiveBufferSize, h.SendBufferSize), (uint)Math.Min(limits.SendBufferSize, h.ReceiveBufferSize),
                    (uint)limits.MaxMessageSize, (uint)limits.MaxChunkCount);
                await stream.WriteAsync(ack.Encode(), server._stop.Token);
                _codec = new SecureChannelCodec(limits)
                {
                    PeerReceiveBufferSize = (int)ack.SendBufferSize,
                    PeerMaxMessageSize = server.HonourClientMessageSize ? h.MaxMessageSize : 0,
                    PeerMaxChunkCount = server.HonourClientMessageSize ? h.MaxChunkCount : 0,
                    ReceiveTooLargeStatus = StatusCodes.BadRequestTooLarge,
                };
                uint tokenId = 0;
                while (!server._stop.IsCancellationRequested)
                {
                    var frame = await TcpFrameReader.ReadAsync(stream, limits.ReceiveBufferSize, server._stop.Token);
                    if (frame.MessageType == TcpMessageType.Message)
                    {
                        lock (server._tokensSeen)
                        {
                            server._tokensSeen.Add(BitConverter.ToUInt32(frame.Buffer, 12));
                        }
                    }

                    var message = _codec.AddChunk(frame);
                    if (message is null || !message.IsGood)
                    {
                        continue;
                    }

                    if (message.MessageType == TcpMessageType.CloseSecureChannel)
                    {
                        Client.Dispose();
                        return;
                    }

                    var request = (IServiceRequest)MessageCodec.Decode(message.Body);
                    lock (server._received)
                    {
                        server._received.Add(request);
                    }

                    if (request is OpenSecureChannelRequest opn)
                    {
                        if (opn.RequestType == SecurityTokenRequestType.Issue)
                        {
                            _codec.ChannelId = server._nextChannelId++;
                        }

                        tokenId++;
                        var response = new OpenSecureChannelResponse
                        {
                            ResponseHeader = new ResponseHeader { RequestHandle = opn.RequestHeader.RequestHandle },
                            SecurityToken = new ChannelSecurityToken { ChannelId = _codec.ChannelId, TokenId = tokenId, RevisedLifetime = server.RevisedLifetimeMs },
                        };
                        await SendAsync(stream, TcpMessageType.OpenSecureChannel, message.RequestId, response);
                        _codec.SendTokenId = tokenId;
                        continue;
                    }

                    var requestId = message.RequestId;
                    var answer = server.DeferringHandler is { } deferring
                        ? deferring(request, r =>
                        {
                            r.ResponseHeader.RequestHandle = request.RequestHeader.RequestHandle;
                            return SendAsync(stream, TcpMessageType.Message, requestId, r);
                        })
                        : server.Handler(request);
                    if (answer is not null)
                    {
                        answer.ResponseHeader.RequestHandle = request.RequestHeader.RequestHandle;
                        await SendAsync(stream, TcpMessageType.Message, message.RequestId, answer);
                    }
                }
            }
            catch (Exception ex) when (ex is ServiceResultException or IOException or ObjectDisposedException or OperationCanceledException or SocketException)
            {
                Client.Dispose();
            }
        }

        private async Task SendAsync(Stream stream, uint type, uint requestId, IEncodeable response)
        {
            await _sendLock.WaitAsync();
            try
            {
                foreach (var chunk in _codec!.EncodeChunks(type, requestId, MessageCodec.Encode(response), StatusCodes.BadResponseTooLarge))
                {
                    await stream.WriteAsync(chunk);
                }
            }
            finally
            {
                _sendLock.Release();
            }
        }
    }
}
