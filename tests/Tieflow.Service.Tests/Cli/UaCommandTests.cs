using System.Net;
using System.Net.Sockets;
using System.Text.Json;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.Service.Tests.Cli;

/// <summary>
/// <c>tieflow ua browse|read|watch</c> (docs/commands.md) against our OPC UA server over loopback: JSON shapes, exit
/// codes (2 bad usage, 3 unreachable), and the password of <c>--user</c> never printed.
/// </summary>
[Collection(UaSecurityCommandTests.PasswordCollection)]
public sealed class UaCommandTests : IAsyncLifetime
{
    private const string Password = "correct-horse-battery-staple";
    private static readonly DateTime Measured = new(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);

    private readonly CancellationTokenSource _stop = new();
    private UaServer _server = null!;
    private NodeId _flow;
    private NodeId _quality;
    private Task _ticker = Task.CompletedTask;

    public async Task InitializeAsync()
    {
        _server = new UaServer(new UaServerOptions { ResourcePath = "/plant", Users = new Dictionary<string, string> { ["operator"] = Password } });
        var train = _server.AddFolder(UaServer.ObjectsFolder, "Train");
        _flow = _server.AddVariable(train, "FeedFlow", new Variant(BuiltInType.Double, 101.5));
        _quality = _server.AddVariable(train, "Raffinate", new Variant(BuiltInType.Double, 0.012));
        _server.AddVariable(train, "Tag", new Variant(BuiltInType.String, "E-101"));
        _server.UpdateValue(_flow, new Variant(BuiltInType.Double, 101.5), StatusCodes.Good, Measured);
        _server.UpdateValue(_quality, new Variant(BuiltInType.Double, 0.012), StatusCodes.UncertainLastUsableValue, Measured);
        await _server.StartAsync();
    }

    public async Task DisposeAsync()
    {
        await _stop.CancelAsync();
        await _ticker;
        await _server.DisposeAsync();
        _stop.Dispose();
    }

    private string Url => _server.EndpointUrl;

    [Fact]
    public void Read_Json_PrintsValueStatusAndTimes()
    {
        CliRun run = CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--node", "nsu=urn:tieflow:plant;s=Train.Raffinate", "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        var items = doc.RootElement.EnumerateArray().ToList();
        Assert.Equal(2, items.Count);
        Assert.Equal("ns=2;s=Train.FeedFlow", items[0].GetProperty("node").GetString());
        Assert.Equal(101.5, items[0].GetProperty("value").GetDouble(), 12);
        Assert.Equal("Good", items[0].GetProperty("status").GetString());
        Assert.Equal("2026-03-02T08:00:00Z", items[0].GetProperty("sourceTime").GetString());
        Assert.Equal(JsonValueKind.String, items[0].GetProperty("serverTime").ValueKind);
        Assert.Equal("UncertainLastUsableValue", items[1].GetProperty("status").GetString());
    }

    [Fact]
    public void Read_Readable_PrintsATable()
    {
        CliRun run = CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.Tag");

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("E-101", run.Output, StringComparison.Ordinal);
        Assert.Contains("Good", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Browse_Json_ListsNodesWithClassesAndDataTypes()
    {
        CliRun run = CliRun.Of("ua", "browse", "--endpoint", Url, "--depth", "2", "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        var entries = doc.RootElement.EnumerateArray().ToList();
        var train = Assert.Single(entries, e => e.GetProperty("node").GetString() == "ns=2;s=Train");
        Assert.Equal("Object", train.GetProperty("nodeClass").GetString());
        Assert.Equal(1, train.GetProperty("depth").GetInt32());
        var flow = Assert.Single(entries, e => e.GetProperty("node").GetString() == "ns=2;s=Train.FeedFlow");
        Assert.Equal("2:FeedFlow", flow.GetProperty("browseName").GetString());
        Assert.Equal("Variable", flow.GetProperty("nodeClass").GetString());
        Assert.Equal("Double", flow.GetProperty("dataType").GetString());
        Assert.Equal("ns=2;s=Train", flow.GetProperty("parent").GetString());
        Assert.Contains(entries, e => e.GetProperty("node").GetString() == "i=2253");
    }

    [Fact]
    public void Watch_For_PrintsEachChangeAsAJsonLineAndEndsCleanly()
    {
        _ticker = TickAsync(_stop.Token);

        CliRun run = CliRun.Of("ua", "watch", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--sampling", "00:00:00.100", "--for", "00:00:02", "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        var lines = run.Output.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length >= 5, $"expected several changes in 2 s, got {lines.Length}:\n{run.Output}\n{run.Error}");
        var values = new List<double>();
        foreach (var line in lines)
        {
            using var doc = JsonDocument.Parse(line);
            var root = doc.RootElement;
            Assert.Equal(["node", "value", "status", "sourceTime"], root.EnumerateObject().Select(p => p.Name));
            Assert.Equal("ns=2;s=Train.FeedFlow", root.GetProperty("node").GetString());
            values.Add(root.GetProperty("value").GetDouble());
        }
        Assert.True(values[^1] > values[0], string.Join(", ", values));
    }

    [Fact]
    public async Task Watch_ServerRestartedDuringTheWatch_ReconnectsByItselfAndReportsTheGap()
    {
        // The watch lasts long enough for the reconnect even on a busy machine (it once missed it within 7 s at a load
        // of 20 on two cores); what is asserted is the events, not how fast they came.
        var port = _server.Port;
        var restart = Task.Run(async () =>
        {
            await Task.Delay(1500);
            await _server.DisposeAsync();
            var second = new UaServer(new UaServerOptions { Port = port, ResourcePath = "/plant" });
            var train = second.AddFolder(UaServer.ObjectsFolder, "Train");
            second.AddVariable(train, "FeedFlow", new Variant(BuiltInType.Double, 5000.0));
            await second.StartAsync();
            _server = second;
        });

        CliRun run = await Task.Run(() => CliRun.Of("ua", "watch", "--endpoint", $"opc.tcp://127.0.0.1:{port}/plant", "--node", "ns=2;s=Train.FeedFlow",
            "--sampling", "00:00:00.200", "--for", "00:00:15", "--json"));
        await restart;

        Assert.True(run.ExitCode == 0, run.Error);
        var values = run.Output.Split('\n', StringSplitOptions.RemoveEmptyEntries)
            .Select(l => JsonDocument.Parse(l).RootElement.GetProperty("value").GetDouble()).ToList();
        Assert.Contains(101.5, values);
        Assert.Contains(5000.0, values);
        Assert.Contains("gap:", run.Error, StringComparison.Ordinal);
        Assert.Contains("Reconnecting", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("read", "--node", "ns=2;x=Train")]
    [InlineData("read", "--node", "ns=abc;s=Train")]
    [InlineData("browse", "--node", "i=85", "--depth", "0")]
    [InlineData("watch", "--node", "i=2258", "--sampling", "00:00:00")]
    [InlineData("read", "--node", "nsu=urn:not-there;s=X")]
    public void Command_BadUsage_ExitsTwoNamingTheProblem(string command, params string[] rest)
    {
        CliRun run = CliRun.Of(["ua", command, "--endpoint", Url, .. rest]);

        Assert.Equal(2, run.ExitCode);
        Assert.StartsWith("error:", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_EndpointNotAnOpcUaUrl_ExitsTwo()
    {
        CliRun run = CliRun.Of("ua", "read", "--endpoint", "http://127.0.0.1/", "--node", "i=85");

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("--endpoint", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    [Trait("Category", "Slow")]
    public void Read_NothingListening_ExitsThreeAtTheDeadline()
    {
        CliRun run = CliRun.Of("ua", "read", "--endpoint", $"opc.tcp://127.0.0.1:{ClosedPort()}/x", "--node", "i=85", "--connect-timeout", "1s");

        Assert.Equal(3, run.ExitCode);
        Assert.Contains("unreachable within 1s", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Browse_PeerThatAcceptsAndNeverAnswers_EndsAtTheDeadlineNamingTheStep()
    {
        // Issue 12 §6: against such a peer the command took 17 to 32 s (three attempts, each its full timeout).
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        int port = ((IPEndPoint)listener.LocalEndpoint).Port;
        var accepted = new List<TcpClient>();
        var accepting = Task.Run(async () =>
        {
            try
            {
                while (true)
                {
                    accepted.Add(await listener.AcceptTcpClientAsync(_stop.Token));
                }
            }
            catch (OperationCanceledException)
            {
            }
        });

        var clock = System.Diagnostics.Stopwatch.StartNew();
        CliRun run = await Task.Run(() => CliRun.Of("ua", "browse", "--endpoint", $"opc.tcp://127.0.0.1:{port}/x", "--connect-timeout", "2s"));
        clock.Stop();
        await _stop.CancelAsync();
        await accepting;
        accepted.ForEach(c => c.Dispose());

        Assert.Equal(3, run.ExitCode);
        Assert.Contains("within 2s", run.Error, StringComparison.Ordinal);
        Assert.Contains("Hello with Acknowledge", run.Error, StringComparison.Ordinal);

        // Generous bound: one deadline, not several attempts of it.
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(15), $"took {clock.Elapsed}");
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Browse_PeerThatAcknowledgesAndThenStaysSilent_NamesOpenSecureChannel()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        int port = ((IPEndPoint)listener.LocalEndpoint).Port;
        var peer = Task.Run(async () =>
        {
            using TcpClient client = await listener.AcceptTcpClientAsync(_stop.Token);
            NetworkStream stream = client.GetStream();
            _ = await stream.ReadAsync(new byte[4096], _stop.Token);

            // Acknowledge (OPC 10000-6 §7.1.2.4): "ACKF", size 28, version 0, buffers 65536, no message or chunk limit.
            byte[] ack = [.. "ACKF"u8, 28, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0];
            await stream.WriteAsync(ack, _stop.Token);
            try
            {
                await Task.Delay(Timeout.Infinite, _stop.Token);
            }
            catch (OperationCanceledException)
            {
            }
        });

        CliRun run = await Task.Run(() => CliRun.Of("ua", "browse", "--endpoint", $"opc.tcp://127.0.0.1:{port}/x", "--connect-timeout", "2s"));
        await _stop.CancelAsync();
        await peer;

        Assert.Equal(3, run.ExitCode);
        Assert.Contains("OpenSecureChannel got no response", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_UnknownNode_IsSummarisedOnStandardError()
    {
        CliRun run = CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--node", "ns=2;s=Train.NotThere");

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("1 of 2 node(s) could not be read: ns=2;s=Train.NotThere (BadNodeIdUnknown)", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Watch_For_EndsCleanlyWithoutAConnectionFault()
    {
        CliRun run = CliRun.Of("ua", "watch", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--for", "500ms");

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("watch ended as asked", run.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("Disconnected", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_UserWithPasswordFromEnvironment_LogsInAndNeverPrintsThePassword()
    {
        var good = WithPassword(Password, () => CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--user", "operator", "--json"));
        var bad = WithPassword("wrong-" + Password, () => CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--user", "operator"));
        var missing = WithPassword(null, () => CliRun.Of("ua", "read", "--endpoint", Url, "--node", "ns=2;s=Train.FeedFlow", "--user", "operator"));

        Assert.True(good.ExitCode == 0, good.Error);
        Assert.Equal(3, bad.ExitCode);
        Assert.Contains("BadUserAccessDenied", bad.Error, StringComparison.Ordinal);
        Assert.Equal(2, missing.ExitCode);
        Assert.Contains("TIEFLOW_OPCUA_PASSWORD", missing.Error, StringComparison.Ordinal);
        foreach (var run in new[] { good, bad, missing })
        {
            Assert.DoesNotContain(Password, run.Output + run.Error, StringComparison.Ordinal);
        }
    }

    [Theory]
    [InlineData("ua", "--help")]
    [InlineData("ua", "browse", "--help")]
    [InlineData("ua", "read", "--help")]
    [InlineData("ua", "watch", "--help")]
    public void Help_UaCommands_ExitZeroWithUsage(params string[] args)
    {
        CliRun run = CliRun.Of(args);

        Assert.Equal(0, run.ExitCode);
        Assert.Contains("Usage:", run.Output, StringComparison.Ordinal);
    }

    internal static CliRun WithPassword(string? password, Func<CliRun> run)
    {
        var saved = Environment.GetEnvironmentVariable("TIEFLOW_OPCUA_PASSWORD");
        Environment.SetEnvironmentVariable("TIEFLOW_OPCUA_PASSWORD", password);
        try
        {
            return run();
        }
        finally
        {
            Environment.SetEnvironmentVariable("TIEFLOW_OPCUA_PASSWORD", saved);
        }
    }

    private static int ClosedPort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    private async Task TickAsync(CancellationToken ct)
    {
        var value = 100.0;
        while (!ct.IsCancellationRequested)
        {
            try
            {
                await Task.Delay(50, ct);
            }
            catch (OperationCanceledException)
            {
                return;
            }
            value += 0.5;
            _server.UpdateValue(_flow, new Variant(BuiltInType.Double, value), StatusCodes.Good, TimeProvider.System.GetUtcNow().UtcDateTime);
        }
    }
}
