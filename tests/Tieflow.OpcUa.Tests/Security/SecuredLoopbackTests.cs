using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;
using SubscriptionSettings = Tieflow.OpcUa.Client.SubscriptionSettings;

namespace Tieflow.OpcUa.Tests.Security;

/// <summary>Our client against our server under every security policy and mode, with certificates from stores.</summary>
public sealed class SecuredLoopbackTests : IAsyncLifetime
{
    private const string Password = "Pw-7f3c-never-logged";
    private readonly TempFolder _serverPki = new();
    private readonly TempFolder _clientPki = new();
    private UaServer _server = null!;
    private UaCertificateStore _serverStore = null!;
    private UaCertificateStore _clientStore = null!;
    private NodeId _flow;

    public async Task InitializeAsync()
    {
        _serverStore = new UaCertificateStore(_serverPki.Path);
        _clientStore = new UaCertificateStore(_clientPki.Path);
        _server = new UaServer(new UaServerOptions
        {
            ResourcePath = "/sim",
            NamespaceUri = "urn:test:plant",
            Users = new Dictionary<string, string> { ["operator"] = Password },
            Security = new UaServerSecurityOptions
            {
                Certificate = _serverStore.GetOrCreateApplicationCertificate("urn:tieflow:opcua-server", "Test server", ["127.0.0.1", "localhost"]),
                AcceptAnyClientCertificate = true,
            },
        });
        var unit = _server.AddObject(_server.AddFolder(UaServer.ObjectsFolder, "Plant"), "Unit1");
        _flow = _server.AddVariable(unit, "Flow", Variant.From(1.5));
        await _server.StartAsync();
    }

    public async Task DisposeAsync()
    {
        await _server.DisposeAsync();
        _serverPki.Dispose();
        _clientPki.Dispose();
    }

    private void TrustServer() => _clientStore.Trust(Path.Combine(_serverStore.OwnDirectory, "certificate.der"));

    private UaClientOptions Options(UaSecurity? security, UaUserIdentity? identity = null) => new()
    {
        EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{_server.Port}/sim"),
        Security = security,
        CertificateStore = _clientStore,
        Identity = identity ?? UaUserIdentity.Anonymous,
        RequestTimeout = TimeSpan.FromSeconds(10),
    };

    public static TheoryData<string> AllSecured() => [.. UaSecurity.AllSecure.Select(s => s.ToString())];

    [Theory]
    [MemberData(nameof(AllSecured))]
    public async Task Connect_EachPolicyAndMode_ReadsAndSubscribes(string security)
    {
        TrustServer();
        await using var client = new UaClient(Options(UaSecurity.Parse(security)));
        await client.ConnectAsync();

        Assert.Equal(security, client.Security!.ToString());
        var values = await client.ReadAsync([_flow]);
        Assert.Equal(1.5, (double)values[0].Value.Value!, 12);

        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100) },
            [new MonitoredNode { Node = ExpandedNodeId.Parse("nsu=urn:test:plant;s=Plant.Unit1.Flow"), Key = "flow" }]);
        _server.UpdateValue(_flow, Variant.From(2.5), StatusCodes.Good, new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc));
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        await foreach (var e in subscription.Events.ReadAllAsync(cts.Token))
        {
            if (e is UaDataChange { Value.Value: 2.5 })
            {
                break;
            }
        }
    }

    [Fact]
    public async Task Connect_WithoutSecurityOption_PicksTheMostSecureEndpoint()
    {
        TrustServer();
        await using var client = new UaClient(Options(null));
        await client.ConnectAsync();
        Assert.Equal("SignAndEncrypt:Aes256_Sha256_RsaPss", client.Security!.ToString());
    }

    [Fact]
    public async Task Connect_UntrustedServer_CopiesToRejectedAndSucceedsOnceTrusted()
    {
        await using (var client = new UaClient(Options(UaSecurity.Parse("SignAndEncrypt:Basic256Sha256"))))
        {
            var error = await Assert.ThrowsAsync<UaCertificateException>(() => client.ConnectAsync());
            Assert.Equal(StatusCodes.BadCertificateUntrusted, error.Status);
            Assert.NotNull(error.RejectedPath);
            Assert.True(File.Exists(error.RejectedPath));
            Assert.Contains(_clientStore.TrustedDirectory, error.Message, StringComparison.Ordinal);
            Assert.Single(_clientStore.List(), c => c.Folder == "rejected" && c.Thumbprint == error.Thumbprint);
            _clientStore.Trust(error.Thumbprint);
        }

        await using var trusted = new UaClient(Options(UaSecurity.Parse("SignAndEncrypt:Basic256Sha256")));
        await trusted.ConnectAsync();
        Assert.Equal(UaConnectionState.Connected, trusted.State);
        Assert.DoesNotContain(_clientStore.List(), c => c.Folder == "rejected");
    }

    [Fact]
    public async Task ServerWithATrustList_RefusesAnUnknownClientUntilItIsTrusted()
    {
        using var pki = new TempFolder();
        var serverStore = new UaCertificateStore(pki.Path);
        await using var server = new UaServer(new UaServerOptions
        {
            Security = UaServerSecurityOptions.FromStore(serverStore, "urn:tieflow:opcua-server", "Strict server", ["127.0.0.1"]),
        });
        await server.StartAsync();
        _clientStore.Trust(Path.Combine(serverStore.OwnDirectory, "certificate.der"));
        var options = Options(UaSecurity.Parse("SignAndEncrypt:Basic256Sha256")) with { EndpointUrl = new Uri(server.EndpointUrl) };

        await using (var refused = new UaClient(options))
        {
            var error = await Assert.ThrowsAsync<ServiceResultException>(() => refused.ConnectAsync());
            Assert.Equal(StatusCodes.BadCertificateUntrusted, error.Status);
        }

        var rejected = Assert.Single(serverStore.List(), c => c.Folder == "rejected");
        Assert.Equal(["urn:tieflow:client"], rejected.ApplicationUris);
        serverStore.Trust(rejected.Thumbprint);
        await using var accepted = new UaClient(options);
        await accepted.ConnectAsync();
        Assert.Equal(UaConnectionState.Connected, accepted.State);
    }

    [Theory]
    [InlineData("SignAndEncrypt:Aes256_Sha256_RsaPss")]
    [InlineData("Sign:Aes128_Sha256_RsaOaep")]
    [InlineData("None")]
    public async Task UserName_EncryptedPassword_IsAcceptedAndAWrongOneRefusedWithoutLeakingIt(string security)
    {
        TrustServer();
        await using (var client = new UaClient(Options(UaSecurity.Parse(security), UaUserIdentity.FromUserName("operator", Password))))
        {
            await client.ConnectAsync();
            Assert.Equal(UaConnectionState.Connected, client.State);
        }

        await using var wrong = new UaClient(Options(UaSecurity.Parse(security), UaUserIdentity.FromUserName("operator", "Wrong-" + Password)));
        var error = await Assert.ThrowsAsync<ServiceResultException>(() => wrong.ConnectAsync());
        Assert.Equal(StatusCodes.BadUserAccessDenied, error.Status);
        Assert.DoesNotContain(Password, error.ToString(), StringComparison.Ordinal);
    }
}
