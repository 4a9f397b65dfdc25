using System.Net;
using System.Net.Sockets;
using System.Text.Json;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Tests.Interop;
using Tieflow.Simulator.Cli;
using Tieflow.Simulator.Serving;
using Tieflow.Simulator.Tests.Cli;

namespace Tieflow.Simulator.Tests.Serving;

public sealed class InstrumentServerTests
{
    [Fact]
    public async Task Update_PublishesValueQualityAsStatusAndSourceTime()
    {
        PlantDescription plant = new("Brackenmoor", [TestPlants.Train()]);
        await using InstrumentServer server = await InstrumentServer.StartAsync(plant, new Uri("opc.tcp://127.0.0.1:0/sim"), TimeProvider.System, CancellationToken.None);
        var time = new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);

        server.Update(new SignalSample("FI-301", time, 1012.5, SignalQuality.Good));
        server.Update(new SignalSample("AI-314", time, 7.5, SignalQuality.Bad));
        DataValue good = server.Read("FI-301");
        DataValue bad = server.Read("AI-314");

        Assert.True(good.Value.TryGetDouble(out double v) && v == 1012.5);
        Assert.True(good.Status.IsGood);
        Assert.Equal(time.UtcDateTime, good.SourceTimestamp);
        Assert.True(bad.Status.IsBad);
    }

    [Fact]
    public void Problems_NodeIdsThatCannotBeServed_AreListed()
    {
        UnitDescription unit = TestPlants.Train() with
        {
            Instruments = [TestPlants.Flow("FI-301", UnitStream.Feed, 8, 0, 2500) with { Node = "i=2258" }, TestPlants.Flow("FI-302", UnitStream.Solvent, 4, 0, 1500) with { Node = "ns=3;s=A.B" }],
        };
        Assert.Equal(2, InstrumentServer.Problems(new PlantDescription("Brackenmoor", [unit])).Count);
    }

    [Fact]
    public async Task Serve_NodeOpcuaClientSubscribes_AndSeesTheValuesChange()
    {
        using var folder = new TempFolder();
        string scenario = SampleScenarios.Copy(folder, "clean.scenario.json", step: "00:00:01");
        int port = FreePort();
        using var cts = new CancellationTokenSource();
        var error = new StringWriter();
        var settings = new RunSettings(scenario, null, null, null, new Uri($"opc.tcp://127.0.0.1:{port}"), Speed: 20);
        Task<int> run = RunHandler.RunAsync(settings, TextWriter.Synchronized(error), TimeProvider.System, cts.Token);
        try
        {
            for (int i = 0; i < 100 && !error.ToString().Contains("serving", StringComparison.Ordinal); i++)
            {
                await Task.Delay(100);
            }

            Assert.Contains("serving", error.ToString(), StringComparison.Ordinal);
            IReadOnlyList<JsonElement> lines = await NodePeer.RunProbeAsync($"opc.tcp://127.0.0.1:{port}", TimeSpan.FromSeconds(60),
                "--must-exist", "--subscribe", "ns=2;s=X300.FI301.PV,ns=2;s=X300.TI302.PV", "--seconds", "3");

            JsonElement[] flow = [.. lines.Where(l => l.GetProperty("kind").GetString() == "data" && l.GetProperty("node").GetString() == "ns=2;s=X300.FI301.PV")];
            Assert.True(flow.Length >= 3, $"expected several notifications of FI-301 in 3 s, got {flow.Length}");
            Assert.True(flow.Select(d => d.GetProperty("value").GetDouble()).Distinct().Count() >= 3, "the noisy feed flow must change");
            Assert.All(flow, d => Assert.Equal("Good", d.GetProperty("status").GetString()));
            Assert.All(flow, d => Assert.StartsWith("2026-03-02T", d.GetProperty("src").GetString(), StringComparison.Ordinal));
            Assert.Contains(lines, l => l.GetProperty("kind").GetString() == "data" && l.GetProperty("node").GetString() == "ns=2;s=X300.TI302.PV");
        }
        finally
        {
            await cts.CancelAsync();
            Assert.Equal(0, await run.WaitAsync(TimeSpan.FromSeconds(30)));
        }
    }

    private static int FreePort()
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        int port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        return port;
    }
}

public sealed class SecuredInstrumentServerTests
{
    [Fact]
    public async Task Serve_WithACertificateStore_AClientReadsUnderSignAndEncryptOnceItTrustsTheServer()
    {
        using var folder = new TempFolder();
        string serverPki = Path.Combine(folder.Path, "server-pki"), clientPki = Path.Combine(folder.Path, "client-pki");
        PlantDescription plant = new("Brackenmoor", [TestPlants.Train()]);
        await using InstrumentServer server = await InstrumentServer.StartAsync(plant, new Uri("opc.tcp://127.0.0.1:0/sim"), TimeProvider.System, CancellationToken.None, serverPki);
        server.Update(new SignalSample("FI-301", new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero), 1012.5, SignalQuality.Good));

        // The server made its own application certificate in its store; the client trusts exactly that one.
        string own = Assert.Single(Directory.GetFiles(Path.Combine(serverPki, "own"), "*.der"));
        Directory.CreateDirectory(Path.Combine(clientPki, "trusted"));
        File.Copy(own, Path.Combine(clientPki, "trusted", "simulator.der"));
        await using var client = new Tieflow.OpcUa.Client.UaClient(new Tieflow.OpcUa.Client.UaClientOptions
        {
            EndpointUrl = new Uri(server.EndpointUrl),
            Security = Tieflow.OpcUa.Security.UaSecurity.Parse("SignAndEncrypt:Aes256_Sha256_RsaPss"),
            CertificateStore = new Tieflow.OpcUa.Security.UaCertificateStore(clientPki),
        });
        await client.ConnectAsync();

        IReadOnlyList<DataValue> values = await client.ReadAsync([NodeId.Parse("ns=2;s=X300.FI301.PV")]);
        Assert.Equal(Tieflow.OpcUa.Security.UaSecurity.Parse("SignAndEncrypt:Aes256_Sha256_RsaPss"), client.Security);
        Assert.True(values[0].Value.TryGetDouble(out double v) && v == 1012.5, values[0].ToString());
    }
}
