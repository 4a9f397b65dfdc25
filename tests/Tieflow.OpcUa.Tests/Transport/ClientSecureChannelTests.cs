using Microsoft.Extensions.Time.Testing;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Tests.Fakes;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Transport;

public sealed class ClientSecureChannelTests
{
    private static readonly TimeSpan Timeout = TimeSpan.FromSeconds(10);

    private static ReadResponse Answer(ReadRequest read) => new()
    {
        Results = read.NodesToRead.Select((n, i) => new DataValue { Value = Variant.From((double)i), Status = StatusCodes.Good }).ToArray(),
    };

    [Fact]
    public async Task SendAsync_Read_ResponseMatched()
    {
        await using var server = new LoopbackServer { Handler = r => r is ReadRequest read ? Answer(read) : null };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);
        Assert.NotEqual(0u, channel.ChannelId);

        var request = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout), NodesToRead = [new ReadValueId { NodeId = new NodeId(2255u), AttributeId = 13 }] };
        var response = await channel.SendAsync<ReadResponse>(request, Timeout, CancellationToken.None);
        Assert.Single(response.Results);
    }

    [Fact]
    public async Task SendAsync_300NodeReadWith8192Buffers_MultiChunkBothWays()
    {
        var small = new TransportLimits { ReceiveBufferSize = 8192, SendBufferSize = 8192 };
        await using var server = new LoopbackServer(small) { Handler = r => r is ReadRequest read ? Answer(read) : null };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url, Limits = small }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);
        var nodes = Enumerable.Range(0, 300).Select(i => new ReadValueId { NodeId = new NodeId($"Plant.Unit1.Tag{i:D4}.WithALongerName", 2), AttributeId = 13 }).ToArray();
        var request = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout), NodesToRead = nodes };
        var response = await channel.SendAsync<ReadResponse>(request, Timeout, CancellationToken.None);
        Assert.Equal(300, response.Results.Length);
        Assert.Equal(299.0, (double)response.Results[299].Value.Value!, 12);
    }

    [Fact]
    public async Task SendAsync_ResponseOverLocalMessageSize_OnlyThatRequestFails()
    {
        var limits = new TransportLimits { MaxMessageSize = 100_000 };
        await using var server = new LoopbackServer { HonourClientMessageSize = false, Handler = r => r is ReadRequest read ? Answer(read) : null };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url, Limits = limits }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);

        // 10 000 results of 16 bytes each: about 160 kB, over the client's 100 kB.
        var big = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout), NodesToRead = Enumerable.Range(0, 10_000).Select(i => new ReadValueId { NodeId = new NodeId((uint)i) }).ToArray() };
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => channel.SendAsync<ReadResponse>(big, Timeout, CancellationToken.None));
        Assert.Equal(StatusCodes.BadResponseTooLarge, ex.Status);

        var small = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout), NodesToRead = [new ReadValueId { NodeId = new NodeId(1u) }] };
        Assert.Single((await channel.SendAsync<ReadResponse>(small, Timeout, CancellationToken.None)).Results);
    }

    [Fact]
    public async Task SendAsync_RequestOverServerMessageSize_BadRequestTooLargeNothingSent()
    {
        await using var server = new LoopbackServer(new TransportLimits { MaxMessageSize = 10_000 }) { Handler = r => r is ReadRequest read ? Answer(read) : null };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);
        var big = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout), NodesToRead = Enumerable.Range(0, 2000).Select(i => new ReadValueId { NodeId = new NodeId((uint)i) }).ToArray() };
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => channel.SendAsync<ReadResponse>(big, Timeout, CancellationToken.None));
        Assert.Equal(StatusCodes.BadRequestTooLarge, ex.Status);
        Assert.True(channel.IsOpen);
    }

    [Fact]
    public async Task SendAsync_NoAnswer_BadRequestTimeoutOnFakeClock()
    {
        var time = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        await using var server = new LoopbackServer();
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, time);
        await channel.OpenAsync(CancellationToken.None);
        var request = new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout) };
        var pending = channel.SendAsync<ReadResponse>(request, TimeSpan.FromSeconds(5), CancellationToken.None);
        await WaitUntil(() => server.Received.Count >= 2);
        time.Advance(TimeSpan.FromSeconds(6));
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => pending);
        Assert.Equal(StatusCodes.BadRequestTimeout, ex.Status);
    }

    [Fact]
    public async Task SendAsync_ServiceFault_ThrowsItsStatus()
    {
        await using var server = new LoopbackServer
        {
            Handler = _ => new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadMessageNotAvailable } },
        };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() =>
            channel.SendAsync<RepublishResponse>(new RepublishRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout) }, Timeout, CancellationToken.None));
        Assert.Equal(StatusCodes.BadMessageNotAvailable, ex.Status);
    }

    [Fact]
    public async Task Renewal_At75PercentOfLifetime_NewTokenUsedOldStillAccepted()
    {
        var time = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        await using var server = new LoopbackServer { RevisedLifetimeMs = 60_000, Handler = r => r is ReadRequest read ? Answer(read) : null };
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, time);
        var renewed = new TaskCompletionSource<uint>();
        channel.TokenRenewed += id => renewed.TrySetResult(id);
        await channel.OpenAsync(CancellationToken.None);
        Assert.Equal(1u, channel.TokenId);

        time.Advance(TimeSpan.FromSeconds(44));
        Assert.Equal(1, server.Received.Count(r => r is OpenSecureChannelRequest));
        time.Advance(TimeSpan.FromSeconds(1.5));
        Assert.Equal(2u, await renewed.Task.WaitAsync(Timeout));
        var renew = server.Received.OfType<OpenSecureChannelRequest>().Last();
        Assert.Equal(SecurityTokenRequestType.Renew, renew.RequestType);

        await channel.SendAsync<ReadResponse>(new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout) }, Timeout, CancellationToken.None);
        Assert.Equal(2u, server.TokensSeen.Last());
    }

    [Fact]
    public async Task Completion_ServerDropsConnection_PendingRequestsFail()
    {
        await using var server = new LoopbackServer();
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = server.Url }, TimeProvider.System);
        await channel.OpenAsync(CancellationToken.None);
        var pending = channel.SendAsync<ReadResponse>(new ReadRequest { RequestHeader = channel.NewHeader(NodeId.Null, Timeout) }, Timeout, CancellationToken.None);
        await WaitUntil(() => server.Received.Count >= 2);
        server.DropConnections();
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => pending);
        Assert.Equal(StatusCodes.BadConnectionClosed, ex.Status);
        Assert.NotNull(await channel.Completion.WaitAsync(Timeout));
    }

    [Fact]
    public async Task OpenAsync_NothingListening_BadNotConnected()
    {
        int port;
        await using (var probe = new LoopbackServer())
        {
            port = probe.Port;
        }

        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{port}/x") }, TimeProvider.System);
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => channel.OpenAsync(CancellationToken.None));
        Assert.Equal(StatusCodes.BadNotConnected, ex.Status);
    }

    [Fact]
    public async Task SendAsync_WriteRequest_RefusedBeforeAnythingIsSent()
    {
        await using var channel = new ClientSecureChannel(new ClientChannelSettings { EndpointUrl = new Uri("opc.tcp://127.0.0.1:1/x") }, TimeProvider.System);
        var ex = await Assert.ThrowsAsync<InvalidOperationException>(() => channel.SendAsync<ServiceFault>(new ForbiddenRequest(673), Timeout, CancellationToken.None));
        Assert.Contains("read-only", ex.Message, StringComparison.Ordinal);
        await Assert.ThrowsAsync<InvalidOperationException>(() => channel.SendAsync<ServiceFault>(new ForbiddenRequest(712), Timeout, CancellationToken.None));
    }

    [Fact]
    public void AllowedRequestIds_NoWriteCallOrOtherChangingService()
    {
        // Write 673, Call 712 (docs/opcua.md §1.5; Call from memory); none of the other services that change a server either.
        foreach (var forbidden in new uint[] { 673, 712 })
        {
            Assert.DoesNotContain(forbidden, ClientServices.AllowedRequestIds);
        }

        Assert.All(ClientServices.AllowedRequestIds, id => Assert.True(EncodeableTypes.TryCreate(id, out var m) && m is IServiceRequest));
    }

    private static async Task WaitUntil(Func<bool> condition)
    {
        for (var i = 0; i < 500 && !condition(); i++)
        {
            await Task.Delay(10);
        }

        Assert.True(condition());
    }

    private sealed class ForbiddenRequest(uint id) : IServiceRequest
    {
        public uint BinaryEncodingId => id;

        public RequestHeader RequestHeader { get; set; } = new();

        public void Encode(UaBinaryWriter writer) => RequestHeader.Encode(writer);

        public void Decode(UaBinaryReader reader) => RequestHeader.Decode(reader);
    }
}
