using System.Text.Json;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;

namespace Tieflow.Service.Tests.Cli;

/// <summary>
/// <c>tieflow ua ... --security --pki</c> and <c>tieflow ua certs</c> against our server with secured endpoints only:
/// the first connection stops with exit 3 and says how to trust the server, trusting it makes the next one work.
/// </summary>
[Collection(PasswordCollection)]
public sealed class UaSecurityCommandTests : IAsyncLifetime, IDisposable
{
    /// <summary>The ua test classes that set TIEFLOW_OPCUA_PASSWORD run one after the other.</summary>
    public const string PasswordCollection = "ua commands with TIEFLOW_OPCUA_PASSWORD";

    private const string Password = "Tr0ub4dor-and-3";
    private readonly string _serverPki = Path.Combine(Path.GetTempPath(), "tieflow-cli-srv-" + Guid.NewGuid().ToString("N"));
    private readonly string _pki = Path.Combine(Path.GetTempPath(), "tieflow-cli-pki-" + Guid.NewGuid().ToString("N"));
    private UaServer _server = null!;

    public async Task InitializeAsync()
    {
        var store = new UaCertificateStore(_serverPki);
        _server = new UaServer(new UaServerOptions
        {
            ResourcePath = "/plant",
            Users = new Dictionary<string, string> { ["operator"] = Password },
            Security = new UaServerSecurityOptions
            {
                Certificate = store.GetOrCreateApplicationCertificate("urn:tieflow:opcua-server", "Plant server", ["127.0.0.1", "localhost"]),
                Endpoints = UaSecurity.AllSecure,
                AcceptAnyClientCertificate = true,
            },
        });
        var train = _server.AddFolder(UaServer.ObjectsFolder, "Train");
        _server.AddVariable(train, "FeedFlow", new Variant(BuiltInType.Double, 101.5));
        await _server.StartAsync();
    }

    public async Task DisposeAsync() => await _server.DisposeAsync();

    public void Dispose()
    {
        foreach (var dir in new[] { _serverPki, _pki })
        {
            if (Directory.Exists(dir))
            {
                Directory.Delete(dir, recursive: true);
            }
        }
    }

    private CliRun Read(params string[] extra) =>
        CliRun.Of(["ua", "read", "--endpoint", _server.EndpointUrl, "--node", "ns=2;s=Train.FeedFlow", "--pki", _pki, "--json", .. extra]);

    [Fact]
    public void Read_UntrustedServer_ExitsThreeWithTheTrustStep_ThenWorksOnceTrusted()
    {
        var first = Read("--security", "SignAndEncrypt:Basic256Sha256");
        Assert.Equal(3, first.ExitCode);
        var rejected = Assert.Single(Directory.GetFiles(Path.Combine(_pki, "rejected")));
        var thumbprint = Assert.Single(new UaCertificateStore(_pki).List(), c => c.Folder == "rejected").Thumbprint;
        Assert.Contains($"tieflow ua certs trust {thumbprint} --pki {_pki}", first.Error, StringComparison.Ordinal);
        Assert.Contains(rejected, first.Error, StringComparison.Ordinal);

        var list = CliRun.Of("ua", "certs", "list", "--pki", _pki, "--json");
        Assert.True(list.ExitCode == 0, list.Error);
        using (var doc = JsonDocument.Parse(list.Output))
        {
            var folders = doc.RootElement.EnumerateArray().Select(e => e.GetProperty("folder").GetString()).ToList();
            Assert.Contains("own", folders);
            Assert.Contains("rejected", folders);
        }

        var trust = CliRun.Of("ua", "certs", "trust", thumbprint[..8], "--pki", _pki);
        Assert.True(trust.ExitCode == 0, trust.Error);

        var second = Read("--security", "SignAndEncrypt:Basic256Sha256");
        Assert.True(second.ExitCode == 0, second.Error);
        using var values = JsonDocument.Parse(second.Output);
        Assert.Equal(101.5, values.RootElement[0].GetProperty("value").GetDouble(), 12);

        var show = CliRun.Of("ua", "certs", "show", thumbprint, "--pki", _pki);
        Assert.True(show.ExitCode == 0, show.Error);
        Assert.Contains("trusted:", show.Output, StringComparison.Ordinal);
        Assert.Contains("urn:tieflow:opcua-server", show.Output, StringComparison.Ordinal);

        var remove = CliRun.Of("ua", "certs", "remove", thumbprint, "--pki", _pki);
        Assert.True(remove.ExitCode == 0, remove.Error);
        Assert.Equal(3, Read().ExitCode);
    }

    [Fact]
    public void Read_EachPolicyAndModeAndTheDefault_WithAUserWhosePasswordIsNeverPrinted()
    {
        Assert.Equal(3, Read().ExitCode);
        Assert.Equal(0, CliRun.Of("ua", "certs", "trust", new UaCertificateStore(_pki).List().Single(c => c.Folder == "rejected").Thumbprint, "--pki", _pki).ExitCode);
        foreach (var security in UaSecurity.AllSecure.Select(s => s.ToString()).Append(null))
        {
            var run = UaCommandTests.WithPassword(Password, () => security is null ? Read("--user", "operator") : Read("--user", "operator", "--security", security));
            Assert.True(run.ExitCode == 0, $"{security}: {run.Error}");
            Assert.DoesNotContain(Password, run.Output + run.Error, StringComparison.Ordinal);
        }

        var none = Read("--security", "None");
        Assert.Equal(3, none.ExitCode);
        Assert.Contains("offers no endpoint with security None", none.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("Encrypt")]
    [InlineData("SignAndEncrypt:Basic128Rsa15")]
    [InlineData("None:Basic256Sha256")]
    public void Read_UnknownSecurity_ExitsTwoListingTheNames(string security)
    {
        var run = Read("--security", security);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("Aes256_Sha256_RsaPss", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Certs_TrustUnknown_ExitsTwo()
    {
        var run = CliRun.Of("ua", "certs", "trust", "ABCDEF0123", "--pki", _pki);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("ABCDEF0123", run.Error, StringComparison.Ordinal);
    }
}
