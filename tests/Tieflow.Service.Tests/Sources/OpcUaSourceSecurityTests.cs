using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Sources;

/// <summary>
/// The OPC UA source against our server over loopback with a certificate, SignAndEncrypt and a user: the password
/// comes from TIEFLOW_OPCUA_PASSWORD, an untrusted server certificate stops the source (exit 3) with the way to trust
/// it, and a refused user is not retried.
/// </summary>
public sealed class OpcUaSourceSecurityTests : IAsyncLifetime, IDisposable
{
    private const string Password = "brine-and-solvent-42";
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(60);
    private static readonly DateTime Measured = new(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);

    private readonly TempFolder _temp = new();
    private readonly PlantDescription _plant = PlantReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json"));
    private UaServer _server = null!;

    private string Pki => Path.Combine(_temp.Path, "client-pki");

    public async Task InitializeAsync()
    {
        var store = new UaCertificateStore(Path.Combine(_temp.Path, "server-pki"));
        _server = new UaServer(new UaServerOptions
        {
            Users = new Dictionary<string, string> { ["operator"] = Password },
            Security = new UaServerSecurityOptions
            {
                Certificate = store.GetOrCreateApplicationCertificate("urn:tieflow:opcua-server", "Plant server", ["127.0.0.1", "localhost"]),
                Endpoints = UaSecurity.AllSecure,
                AcceptAnyClientCertificate = true,
            },
        });

        // Every instrument of the demo plant at its NodeId (ns=2;s=Folder.Object.Variable), one good reading each.
        var containers = new Dictionary<string, NodeId>(StringComparer.Ordinal);
        foreach (Instrument i in _plant.Units.SelectMany(u => u.Instruments))
        {
            string[] parts = i.Node["ns=2;s=".Length..].Split('.');
            NodeId parent = UaServer.ObjectsFolder;
            for (int p = 0; p < parts.Length - 1; p++)
            {
                string path = string.Join('.', parts[..(p + 1)]);
                if (!containers.TryGetValue(path, out NodeId node))
                {
                    containers[path] = node = p == 0 ? _server.AddFolder(parent, parts[p]) : _server.AddObject(parent, parts[p]);
                }

                parent = node;
            }

            NodeId variable = _server.AddVariable(parent, parts[^1], new Variant(BuiltInType.Double, 0.0));
            _server.UpdateValue(variable, new Variant(BuiltInType.Double, 1.5), StatusCodes.Good, Measured);
        }

        await _server.StartAsync();
    }

    public async Task DisposeAsync() => await _server.DisposeAsync();

    public void Dispose() => _temp.Dispose();

    private OpcUaSource Source(string? password) => new(_plant, new OpcUaSourceOptions
    {
        Endpoint = _server.EndpointUrl,
        User = "operator",
        Security = "SignAndEncrypt",
        Pki = Pki,
        PublishingInterval = TimeSpan.FromMilliseconds(200),
        SamplingInterval = TimeSpan.FromMilliseconds(200),
        ConnectRetryDelay = TimeSpan.FromMilliseconds(100),
    }, TimeProvider.System, environment: name => name == "TIEFLOW_OPCUA_PASSWORD" ? password : null);

    [Fact]
    public async Task Run_UntrustedServerThenTrusted_StopsWithTheTrustStepThenDeliversWithTheUser()
    {
        await using (var first = new SourceEventLog(Source(Password)))
        {
            var untrusted = await Assert.ThrowsAsync<SignalSourceException>(() => first.Run.WaitAsync(Patience));
            Assert.Equal(3, untrusted.ExitCode);
            Assert.Contains("not trusted yet", untrusted.Message, StringComparison.Ordinal);
            Assert.Contains(Path.Combine(Pki, "trusted"), untrusted.Message, StringComparison.Ordinal);
            Assert.DoesNotContain(Password, untrusted.Message, StringComparison.Ordinal);

            // Trusted the way the message says: the rejected copy moved into trusted/.
            string rejected = ((UaCertificateException)untrusted.InnerException!).RejectedPath!;
            Directory.CreateDirectory(Path.Combine(Pki, "trusted"));
            File.Move(rejected, Path.Combine(Pki, "trusted", Path.GetFileName(rejected)));
        }

        await using var log = new SourceEventLog(Source(Password));
        int connected = await log.WaitForAsync(e => e is SourceStateChanged { State: SourceState.Connected }, Patience, what: "Connected");
        int tags = _plant.Units.Sum(u => u.Instruments.Count);
        await log.WaitForAsync(_ => log.Snapshot().OfType<SampleArrived>().Select(s => s.Sample.Tag).Distinct().Count() == tags, Patience, what: "a sample of every tag");
        await log.StopAsync();

        var state = (SourceStateChanged)log.Snapshot()[connected];
        Assert.Equal(new DateTimeOffset(Measured), state.Time);
        Assert.All(log.Snapshot().OfType<SampleArrived>(), s =>
        {
            Assert.Equal(1.5, s.Sample.Value);
            Assert.Equal(SignalQuality.Good, s.Sample.Quality);
            Assert.Equal(new DateTimeOffset(Measured), s.Sample.Time);
        });
    }

    [Fact]
    public async Task Run_WrongPassword_StopsAtTheFirstAttemptWithExitThree()
    {
        // Trust the server first, so that the password is what is refused.
        await using (var first = new SourceEventLog(Source(Password)))
        {
            var untrusted = await Assert.ThrowsAsync<SignalSourceException>(() => first.Run.WaitAsync(Patience));
            string rejected = ((UaCertificateException)untrusted.InnerException!).RejectedPath!;
            Directory.CreateDirectory(Path.Combine(Pki, "trusted"));
            File.Move(rejected, Path.Combine(Pki, "trusted", Path.GetFileName(rejected)));
        }

        await using var log = new SourceEventLog(Source("not-the-password"));
        var refused = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));

        Assert.Equal(3, refused.ExitCode);
        Assert.Contains("refused the session", refused.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("not-the-password", refused.Message, StringComparison.Ordinal);
        await log.DrainAsync();
        Assert.DoesNotContain(log.Snapshot(), e => e is SourceStateChanged { Reason: { } r } && r.StartsWith("attempt", StringComparison.Ordinal));
    }
}
