using System.Buffers.Binary;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// A wire-level test client written against OPC 10000-6 §6.7 and §7.1 directly (HEL, OPN, MSG chunks under
/// SecurityPolicy None), used to drive our server byte by byte and to send it malformed input.
/// </summary>
internal sealed class RawUaClient : IDisposable
{
    public const string NonePolicy = "http://opcfoundation.org/UA/SecurityPolicy#None";

    private readonly TcpClient _tcp = new() { NoDelay = true };
    private NetworkStream? _stream;
    private uint _sequence;
    private uint _requestId;
    private uint _handle;

    public uint ChannelId { get; private set; }

    public uint TokenId { get; set; }

    public NodeId AuthenticationToken { get; set; }

    public uint ServerReceiveBufferSize { get; private set; }

    public uint ServerSendBufferSize { get; private set; }

    public uint ServerMaxMessageSize { get; private set; }

    public uint ServerMaxChunkCount { get; private set; }

    public int ChunksOfLastResponse { get; private set; }

    public TimeSpan Timeout { get; set; } = TimeSpan.FromSeconds(10);

    public NetworkStream Stream => _stream ?? throw new InvalidOperationException("not connected");

    public async Task ConnectAsync(int port)
    {
        await _tcp.ConnectAsync("127.0.0.1", port);
        _stream = _tcp.GetStream();
    }

    public static byte[] Hello(string url, uint receiveBufferSize = 65536, uint sendBufferSize = 65536, uint maxMessageSize = 0, uint maxChunkCount = 0)
    {
        var w = new UaBinaryWriter();
        Raw(w, "HELF"u8);
        w.WriteUInt32(0);
        w.WriteUInt32(0);
        w.WriteUInt32(receiveBufferSize);
        w.WriteUInt32(sendBufferSize);
        w.WriteUInt32(maxMessageSize);
        w.WriteUInt32(maxChunkCount);
        w.WriteString(url);
        var bytes = w.ToArray();
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4), (uint)bytes.Length);
        return bytes;
    }

    public async Task HelloAsync(string url, uint receiveBufferSize = 65536, uint maxMessageSize = 0, uint maxChunkCount = 0)
    {
        await SendRawAsync(Hello(url, receiveBufferSize, 65536, maxMessageSize, maxChunkCount));
        var (type, _, body) = await ReadMessageAsync();
        if (type != "ACK")
        {
            throw new InvalidOperationException($"expected ACK, got {type} {Describe(type, body)}");
        }
        ServerReceiveBufferSize = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(4));
        ServerSendBufferSize = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(8));
        ServerMaxMessageSize = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(12));
        ServerMaxChunkCount = BinaryPrimitives.ReadUInt32LittleEndian(body.AsSpan(16));
    }

    public byte[] OpenMessage(SecurityTokenRequestType type = SecurityTokenRequestType.Issue, uint lifetimeMs = 600_000)
    {
        var request = new OpenSecureChannelRequest
        {
            RequestHeader = new RequestHeader { RequestHandle = ++_handle, TimeoutHint = 10_000 },
            ClientProtocolVersion = 0,
            RequestType = type,
            SecurityMode = MessageSecurityMode.None,
            ClientNonce = [],
            RequestedLifetime = lifetimeMs,
        };
        var w = new UaBinaryWriter();
        Raw(w, "OPNF"u8);
        w.WriteUInt32(0);
        w.WriteUInt32(ChannelId);
        w.WriteString(NonePolicy);
        w.WriteByteString(null);
        w.WriteByteString(null);
        w.WriteUInt32(++_sequence);
        w.WriteUInt32(++_requestId);
        w.WriteNodeId(new NodeId(request.BinaryEncodingId));
        request.Encode(w);
        var bytes = w.ToArray();
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4), (uint)bytes.Length);
        return bytes;
    }

    public async Task<OpenSecureChannelResponse> OpenAsync(SecurityTokenRequestType type = SecurityTokenRequestType.Issue, uint lifetimeMs = 600_000)
    {
        await SendRawAsync(OpenMessage(type, lifetimeMs));
        var (messageType, _, body) = await ReadMessageAsync();
        if (messageType != "OPN")
        {
            throw new InvalidOperationException($"expected OPN, got {messageType} {Describe(messageType, body)}");
        }
        var reader = new UaBinaryReader(body);
        ChannelId = reader.ReadUInt32();
        _ = reader.ReadString();
        _ = reader.ReadByteString();
        _ = reader.ReadByteString();
        _ = reader.ReadUInt32();
        _ = reader.ReadUInt32();
        _ = reader.ReadNodeId();
        var response = new OpenSecureChannelResponse();
        response.Decode(reader);
        TokenId = response.SecurityToken.TokenId;
        return response;
    }

    /// <summary>One MSG chunk (final by default) carrying an encoded request, numbered as the next in sequence.</summary>
    public byte[] MessageChunk(ReadOnlySpan<byte> body, byte chunkType = (byte)'F', uint? requestId = null)
    {
        var w = new UaBinaryWriter(body.Length + 32);
        Raw(w, "MSG"u8);
        w.WriteByte(chunkType);
        w.WriteUInt32(0);
        w.WriteUInt32(ChannelId);
        w.WriteUInt32(TokenId);
        w.WriteUInt32(++_sequence);
        w.WriteUInt32(requestId ?? ++_requestId);
        Raw(w, body);
        var bytes = w.ToArray();
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4), (uint)bytes.Length);
        return bytes;
    }

    public byte[] EncodeRequest(IServiceRequest request)
    {
        request.RequestHeader.AuthenticationToken = AuthenticationToken;
        request.RequestHeader.RequestHandle = ++_handle;
        if (request.RequestHeader.TimeoutHint == 0)
        {
            request.RequestHeader.TimeoutHint = 10_000;
        }
        var w = new UaBinaryWriter();
        w.WriteNodeId(new NodeId(request.BinaryEncodingId));
        request.Encode(w);
        return w.ToArray();
    }

    public async Task<IServiceResponse> RequestAsync(IServiceRequest request)
    {
        await SendRawAsync(MessageChunk(EncodeRequest(request)));
        return await ReadResponseAsync();
    }

    public async Task<T> CallAsync<T>(IServiceRequest request)
        where T : class, IServiceResponse
    {
        var response = await RequestAsync(request);
        return response as T ?? throw new InvalidOperationException(
            $"expected {typeof(T).Name}, got {response.GetType().Name} {response.ResponseHeader.ServiceResult}");
    }

    /// <summary>Reads MSG chunks up to a final one and decodes the response they carry.</summary>
    public async Task<IServiceResponse> ReadResponseAsync()
    {
        var body = new List<byte>();
        ChunksOfLastResponse = 0;
        while (true)
        {
            var (type, chunkType, chunk) = await ReadMessageAsync();
            if (type != "MSG")
            {
                throw new InvalidOperationException($"expected MSG, got {type} {Describe(type, chunk)}");
            }
            ChunksOfLastResponse++;
            body.AddRange(chunk.AsSpan(16).ToArray());
            if (chunkType == (byte)'F')
            {
                break;
            }
        }
        var bytes = body.ToArray();
        var reader = new UaBinaryReader(bytes);
        var typeId = reader.ReadNodeId();
        if (!EncodeableTypes.TryCreate(typeId.NumericIdentifier, out var value) || value is not IServiceResponse response)
        {
            throw new InvalidOperationException($"unknown response type {typeId}");
        }
        response.Decode(reader);
        return response;
    }

    public async Task<CreateSessionResponse> CreateAndActivateSessionAsync(string url)
    {
        var created = await CallAsync<CreateSessionResponse>(new CreateSessionRequest
        {
            ClientDescription = new ApplicationDescription { ApplicationUri = "urn:test:raw", ApplicationType = ApplicationType.Client },
            EndpointUrl = url,
            SessionName = "raw",
            ClientNonce = new byte[32],
            RequestedSessionTimeout = 60_000,
        });
        AuthenticationToken = created.AuthenticationToken;
        await CallAsync<ActivateSessionResponse>(new ActivateSessionRequest
        {
            UserIdentityToken = new ExtensionObject(new NodeId(AnonymousIdentityToken.EncodingId), ExtensionObjectEncoding.Binary,
                new AnonymousIdentityToken { PolicyId = "anonymous" }),
        });
        return created;
    }

    public Task SendRawAsync(byte[] bytes) => Stream.WriteAsync(bytes).AsTask();

    /// <summary>Reads one UA TCP message: its type, chunk type and the bytes after the 8-byte header.</summary>
    public async Task<(string Type, byte ChunkType, byte[] Body)> ReadMessageAsync()
    {
        using var cts = new CancellationTokenSource(Timeout);
        var header = new byte[8];
        await Stream.ReadExactlyAsync(header, cts.Token);
        var size = BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(4));
        if (size < 8 || size > 16 * 1024 * 1024)
        {
            throw new InvalidOperationException($"message size {size} out of range");
        }
        var body = new byte[size - 8];
        await Stream.ReadExactlyAsync(body, cts.Token);
        return (System.Text.Encoding.ASCII.GetString(header, 0, 3), header[3], body);
    }

    /// <summary>Copies raw bytes into a writer.</summary>
    private static void Raw(UaBinaryWriter writer, ReadOnlySpan<byte> bytes) => bytes.CopyTo(writer.GetSpan(bytes.Length));

    /// <summary>The status of an ERR message body.</summary>
    public static StatusCode ErrorStatus(byte[] body) => new(BinaryPrimitives.ReadUInt32LittleEndian(body));

    public void Dispose() => _tcp.Dispose();

    private static string Describe(string type, byte[] body) =>
        type == "ERR" && body.Length >= 4 ? ErrorStatus(body).ToString() : string.Empty;
}
