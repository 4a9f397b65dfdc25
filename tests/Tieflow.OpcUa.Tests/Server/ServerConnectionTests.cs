using Microsoft.Extensions.Time.Testing;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// The server's connection layer on the wire (it runs on the shared Transport types): request reassembly and its
/// limits, the server's own chunk rules, the response size the client announced, and token expiry. Statuses follow
/// OPC 10000-6 §6.7 / §7.1 and docs/opcua.md §1.12 and §3.
/// </summary>
public sealed class ServerConnectionTests : IAsyncLifetime
{
    private const int MaxChunkCount = 4;

    private readonly FakeTimeProvider _time = new(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
    private readonly List<NodeId> _tags = [];
    private UaServer _server = null!;

    private string Url => $"opc.tcp://127.0.0.1:{_server.Port}/sim";

    public async Task InitializeAsync()
    {
        _server = new UaServer(new UaServerOptions { ResourcePath = "/sim", MaxChunkCount = MaxChunkCount }, _time);
        var tags = _server.AddFolder(UaServer.ObjectsFolder, "Tags");
        for (var i = 0; i < 300; i++)
        {
            _tags.Add(_server.AddVariable(tags, $"Tag{i:000}", new Variant(BuiltInType.Double, (double)i)));
        }
        await _server.StartAsync();
    }

    public async Task DisposeAsync() => await _server.DisposeAsync();

    [Fact]
    public async Task Message_RequestInThreeChunks_IsReassembledAndAnswered()
    {
        using var client = await OpenChannelAsync();
        var body = client.EncodeRequest(new GetEndpointsRequest { EndpointUrl = Url });
        var third = body.Length / 3;

        await client.SendRawAsync(client.MessageChunk(body.AsSpan(0, third), (byte)'C', requestId: 50));
        await client.SendRawAsync(client.MessageChunk(body.AsSpan(third, third), (byte)'C', requestId: 50));
        await client.SendRawAsync(client.MessageChunk(body.AsSpan(2 * third), (byte)'F', requestId: 50));
        var response = await client.ReadResponseAsync();

        Assert.IsType<GetEndpointsResponse>(response);
    }

    [Fact]
    public async Task Message_ChunksOfTwoRequestsInterleaved_IsRefusedWithMessageTypeInvalid()
    {
        using var client = await OpenChannelAsync();
        var body = client.EncodeRequest(new GetEndpointsRequest { EndpointUrl = Url });

        await client.SendRawAsync(client.MessageChunk(body.AsSpan(0, 10), (byte)'C', requestId: 60));
        await client.SendRawAsync(client.MessageChunk(body, (byte)'F', requestId: 61));
        var (type, _, error) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpMessageTypeInvalid, RawUaClient.ErrorStatus(error));
        await AssertClosedAsync(client);
    }

    [Fact]
    public async Task Message_MoreChunksThanMaxChunkCount_IsRefusedWithMessageTooLarge()
    {
        using var client = await OpenChannelAsync();
        var body = client.EncodeRequest(new GetEndpointsRequest { EndpointUrl = Url });

        for (var i = 0; i <= MaxChunkCount; i++)
        {
            await client.SendRawAsync(client.MessageChunk(body.AsSpan(i, 1), (byte)'C', requestId: 70));
        }
        var (type, _, error) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpMessageTooLarge, RawUaClient.ErrorStatus(error));
        await AssertClosedAsync(client);
    }

    [Fact]
    public async Task Message_AbortChunk_DropsThePartialRequestAndTheChannelGoesOn()
    {
        using var client = await OpenChannelAsync();
        var body = client.EncodeRequest(new GetEndpointsRequest { EndpointUrl = Url });
        // The body of an abort chunk is an Error: UInt32 status + String reason (OPC 10000-6 §6.7.3).
        var abort = new UaBinaryWriter(32);
        abort.WriteStatusCode(StatusCodes.BadRequestTooLarge);
        abort.WriteString("client gave up");

        await client.SendRawAsync(client.MessageChunk(body.AsSpan(0, 10), (byte)'C', requestId: 80));
        await client.SendRawAsync(client.MessageChunk(abort.ToArray(), (byte)'A', requestId: 80));
        var response = await client.CallAsync<GetEndpointsResponse>(new GetEndpointsRequest { EndpointUrl = Url });

        Assert.NotEmpty(response.Endpoints);
    }

    [Fact]
    public async Task OpenSecureChannel_IntermediateChunk_IsRefusedWithMessageTypeInvalid()
    {
        using var client = await ConnectAsync();
        await client.HelloAsync(Url);
        var open = client.OpenMessage();
        open[3] = (byte)'C';

        await client.SendRawAsync(open);
        var (type, _, error) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpMessageTypeInvalid, RawUaClient.ErrorStatus(error));
        await AssertClosedAsync(client);
    }

    [Fact]
    public async Task Response_OverTheClientsMaxMessageSize_AnswersResponseTooLarge()
    {
        using var client = await ConnectAsync();
        await client.HelloAsync(Url, maxMessageSize: 4096);
        await client.OpenAsync();
        await client.CreateAndActivateSessionAsync(Url);

        // 300 doubles with both timestamps take about 7.8 kB (26 bytes each), over the 4096 the client announced.
        var response = await client.RequestAsync(new ReadRequest
        {
            TimestampsToReturn = TimestampsToReturn.Both,
            NodesToRead = [.. _tags.Select(t => new ReadValueId { NodeId = t, AttributeId = 13 })],
        });

        var fault = Assert.IsType<ServiceFault>(response);
        Assert.Equal(StatusCodes.BadResponseTooLarge, fault.ResponseHeader.ServiceResult);
    }

    [Fact]
    public async Task SecureChannel_TokenNotRenewed_IsClosedAfterItsLifetimePlus25Percent()
    {
        using var client = await ConnectAsync();
        await client.HelloAsync(Url);
        await client.OpenAsync(lifetimeMs: 10_000);

        // docs/opcua.md §1.12: a token stays valid until 125 % of its lifetime, here 12.5 s.
        await AdvanceAsync(TimeSpan.FromSeconds(12.3));
        await client.CallAsync<GetEndpointsResponse>(new GetEndpointsRequest { EndpointUrl = Url });
        await AdvanceAsync(TimeSpan.FromSeconds(0.5));
        var (type, _, error) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadSecureChannelClosed, RawUaClient.ErrorStatus(error));
        await AssertClosedAsync(client);
    }

    private async Task AdvanceAsync(TimeSpan span)
    {
        // In 100 ms steps, the period of the server's housekeeping timer.
        for (var elapsed = TimeSpan.Zero; elapsed < span; elapsed += TimeSpan.FromMilliseconds(100))
        {
            _time.Advance(TimeSpan.FromMilliseconds(100));
        }
        await Task.Delay(20);
    }

    private async Task<RawUaClient> ConnectAsync()
    {
        var client = new RawUaClient();
        await client.ConnectAsync(_server.Port);
        return client;
    }

    private async Task<RawUaClient> OpenChannelAsync()
    {
        var client = await ConnectAsync();
        await client.HelloAsync(Url);
        await client.OpenAsync();
        return client;
    }

    private static async Task AssertClosedAsync(RawUaClient client)
    {
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(5));
        var buffer = new byte[16];
        var n = await client.Stream.ReadAsync(buffer, cts.Token);
        Assert.Equal(0, n);
    }
}
