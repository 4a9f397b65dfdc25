using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Sources;

/// <summary>
/// The OPC UA source against a real server: the simulator serving the demo plant over loopback as a child process
/// (so that it can be restarted and frozen). Timeouts are generous; the assertions are on the events.
/// </summary>
[Collection(OpcUaSourceTests.Collection)]
public sealed class OpcUaSourceTests : IDisposable
{
    public const string Collection = "simulator child processes";

    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(90);
    private readonly TempFolder _temp = new();
    private readonly PlantDescription _plant = PlantReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json"));

    public void Dispose() => _temp.Dispose();

    private string Scenario()
    {
        string plant = Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json");
        return _temp.Write("short.scenario.json", $$"""
            {
              "plant": "{{plant.Replace("\\", "/", StringComparison.Ordinal)}}",
              "start": "2026-03-02T00:00:00Z",
              "duration": "1.00:00:00",
              "step": "00:00:01",
              "seed": 11,
              "faults": [],
              "lab": { "interval": "04:00:00", "delay": "01:30:00", "sigma": 0.0005 }
            }
            """);
    }

    private static OpcUaSourceOptions Options(int port) => new()
    {
        Endpoint = $"opc.tcp://127.0.0.1:{port}",
        Security = "None",
        SamplingInterval = TimeSpan.FromMilliseconds(100),
        PublishingInterval = TimeSpan.FromMilliseconds(200),
        KeepAliveInterval = TimeSpan.FromSeconds(1),
        ConnectRetryDelay = TimeSpan.FromMilliseconds(200),
        ConnectRetryMaxDelay = TimeSpan.FromSeconds(1),
    };

    private OpcUaSource Source(int port, PlantDescription? plant = null, OpcUaSourceOptions? options = null) =>
        new(plant ?? _plant, options ?? Options(port), TimeProvider.System, environment: _ => null);

    private static bool IsState(SourceEvent e, SourceState state) => e is SourceStateChanged s && s.State == state;

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_SimulatedPlant_DeliversEveryTagWithGoodQualityAndTheValuesTheHistoryHolds()
    {
        int port = SimulatorProcess.FreePort();
        string history = _temp.PathOf("history.csv");
        var tags = _plant.Units.SelectMany(u => u.Instruments).Select(i => i.Tag).ToHashSet(StringComparer.Ordinal);
        List<SignalSample> received;
        IReadOnlyList<SourceEvent> events;
        using (SimulatorProcess sim = await SimulatorProcess.StartAsync(Scenario(), port, speed: 10, history))
        {
            await using var log = new SourceEventLog(Source(port));
            await log.WaitForAsync(_ => Good(log.Snapshot()).IsSupersetOf(tags), Patience, what: $"good samples of all {tags.Count} tags");
            await log.StopAsync();
            sim.Stop();
            events = log.Snapshot();
            received = [.. events.OfType<SampleArrived>().Select(s => s.Sample)];
        }

        // Connecting first, then Connected at the source time of the first sample, before it.
        Assert.True(IsState(events[0], SourceState.Connecting), events[0].ToString());
        int connected = events.ToList().FindIndex(e => IsState(e, SourceState.Connected));
        int firstSample = events.ToList().FindIndex(e => e is SampleArrived);
        Assert.True(connected >= 0 && connected < firstSample, $"Connected at {connected}, first sample at {firstSample}");
        Assert.Equal(((SampleArrived)events[firstSample]).Sample.Time, ((SourceStateChanged)events[connected]).Time);
        Assert.DoesNotContain(events, e => IsState(e, SourceState.Disconnected));

        // Source timestamps are the simulated plant's time, not the client's clock.
        var start = new DateTimeOffset(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
        Assert.All(received, s => Assert.InRange(s.Time, start, start.AddDays(1)));

        // The same readings as the history file the simulator wrote, in the same engineering units, read by the history reader.
        var recorded = new Dictionary<(string, DateTimeOffset), SignalSample>();
        foreach (SignalSample s in HistoryCsvReader.Read(history))
        {
            recorded[(s.Tag, s.Time)] = s;
        }

        var matched = new HashSet<string>(StringComparer.Ordinal);
        foreach (SignalSample s in received)
        {
            if (recorded.TryGetValue((s.Tag, s.Time), out SignalSample r))
            {
                Assert.Equal(r.Value, s.Value);
                Assert.Equal(r.Quality, s.Quality);
                matched.Add(s.Tag);
            }
        }

        Assert.Equal(tags.Order(StringComparer.Ordinal), matched.Order(StringComparer.Ordinal));
    }

    private static HashSet<string> Good(IReadOnlyList<SourceEvent> events) =>
        events.OfType<SampleArrived>().Where(s => s.Sample.Quality == SignalQuality.Good).Select(s => s.Sample.Tag).ToHashSet(StringComparer.Ordinal);

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_ServerRestarted_ReportsDisconnectedThenConnectedAndSamplesResume()
    {
        int port = SimulatorProcess.FreePort();
        string scenario = Scenario();
        SimulatorProcess sim = await SimulatorProcess.StartAsync(scenario, port, speed: 10);
        try
        {
            await using var log = new SourceEventLog(Source(port));
            int connected = await log.WaitForAsync(e => IsState(e, SourceState.Connected), Patience, what: "Connected");
            await log.WaitForAsync(e => e is SampleArrived, Patience, connected, "a sample");

            sim.Crash();
            int lost = await log.WaitForAsync(e => IsState(e, SourceState.Disconnected), Patience, connected, "Disconnected after the server stopped");
            sim.Dispose();
            sim = await SimulatorProcess.StartAsync(scenario, port, speed: 10);
            int resumed = await log.WaitForAsync(e => IsState(e, SourceState.Connected), Patience, lost, "Connected after the restart");
            int next = await log.WaitForAsync(e => e is SampleArrived, Patience, resumed, "a sample after the restart");

            IReadOnlyList<SourceEvent> events = log.Snapshot();
            var down = (SourceStateChanged)events[lost];
            var up = (SourceStateChanged)events[resumed];
            DateTimeOffset lastBefore = events.Take(lost).OfType<SampleArrived>().Max(s => s.Sample.Time);
            Assert.True(down.Time >= lastBefore, $"Disconnected at {down.Time}, a sample before it at {lastBefore}");
            Assert.Contains("last sample before the gap", down.Reason, StringComparison.Ordinal);
            Assert.Equal(((SampleArrived)events[resumed + 1]).Sample.Time, up.Time);
            Assert.Contains("first sample after the gap", up.Reason, StringComparison.Ordinal);
            Assert.True(next == resumed + 1);
            await log.StopAsync();
        }
        finally
        {
            sim.Dispose();
        }
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_ServerFrozenAndThawed_ReportsTheGapAndSamplesResume()
    {
        int port = SimulatorProcess.FreePort();
        using SimulatorProcess sim = await SimulatorProcess.StartAsync(Scenario(), port, speed: 10);
        await using var log = new SourceEventLog(Source(port));
        int connected = await log.WaitForAsync(e => IsState(e, SourceState.Connected), Patience, what: "Connected");
        await log.WaitForAsync(e => e is SampleArrived, Patience, connected, "a sample");

        sim.Freeze();
        int lost;
        try
        {
            // Keep-alive 1 s: the client declares the server lost after 1.5 s plus its 2 s margin.
            lost = await log.WaitForAsync(e => IsState(e, SourceState.Disconnected), Patience, connected, "Disconnected while the server is frozen");
            await Task.Delay(TimeSpan.FromSeconds(2));
        }
        finally
        {
            sim.Thaw();
        }

        int resumed = await log.WaitForAsync(e => IsState(e, SourceState.Connected), Patience, lost, "Connected after the thaw");
        await log.WaitForAsync(e => e is SampleArrived, Patience, resumed, "a sample after the thaw");
        IReadOnlyList<SourceEvent> events = log.Snapshot();
        var down = (SourceStateChanged)events[lost];
        var up = (SourceStateChanged)events[resumed];
        Assert.True(up.Time > down.Time, $"the first sample after the gap ({up.Time}) is later than the last before it ({down.Time})");
        Assert.Contains("No data or keep-alive from the server", down.Reason, StringComparison.Ordinal);
        Assert.Contains("first sample after the gap", up.Reason, StringComparison.Ordinal);
        await log.StopAsync();
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_SomeNodesMissingOnTheServer_StartsDegradedNamingTheTags()
    {
        int port = SimulatorProcess.FreePort();
        using SimulatorProcess sim = await SimulatorProcess.StartAsync(Scenario(), port, speed: 10);
        PlantDescription plant = WithNode(_plant, "FI-301", "ns=2;s=X300.FI399.PV");

        await using var log = new SourceEventLog(Source(port, plant));
        int connected = await log.WaitForAsync(e => IsState(e, SourceState.Connected), Patience, what: "Connected");

        var state = (SourceStateChanged)log.Snapshot()[connected];
        Assert.Contains("degraded", state.Reason, StringComparison.Ordinal);
        Assert.Contains("degraded: 1 of 24 instruments have no node on the server and are not watched: FI-301 (ns=2;s=X300.FI399.PV: BadNodeIdUnknown", state.Reason, StringComparison.Ordinal);
        await log.WaitForAsync(e => e is SampleArrived { Sample.Tag: "FI-302" }, Patience, connected, "samples of the other tags");
        Assert.DoesNotContain(log.Snapshot(), e => e is SampleArrived { Sample.Tag: "FI-301" });
        await log.StopAsync();
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_SomeNodesMissingAndAllRequired_FailsWithExitTwoListingTheTags()
    {
        int port = SimulatorProcess.FreePort();
        using SimulatorProcess sim = await SimulatorProcess.StartAsync(Scenario(), port, speed: 10);
        PlantDescription plant = WithNode(WithNode(_plant, "FI-301", "ns=2;s=X300.FI399.PV"), "FI-302", "ns=2;s=Nowhere.FI302.PV");
        OpcUaSourceOptions options = Options(port);
        options.RequireAllNodes = true;

        await using var log = new SourceEventLog(Source(port, plant, options));
        var failure = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));

        Assert.Equal(2, failure.ExitCode);
        Assert.Contains("FI-301 (ns=2;s=X300.FI399.PV: BadNodeIdUnknown", failure.Message, StringComparison.Ordinal);
        Assert.Contains("FI-302 (ns=2;s=Nowhere.FI302.PV", failure.Message, StringComparison.Ordinal);
        Assert.Contains("RequireAllNodes", failure.Message, StringComparison.Ordinal);
    }

    [Fact]
    [Trait("Category", "Slow")]
    public async Task Run_NoNodeOfThePlantOnTheServer_FailsWithExitTwo()
    {
        int port = SimulatorProcess.FreePort();
        using SimulatorProcess sim = await SimulatorProcess.StartAsync(Scenario(), port, speed: 10);
        PlantDescription plant = _plant;
        foreach (Instrument i in _plant.Units.SelectMany(u => u.Instruments))
        {
            plant = WithNode(plant, i.Tag, i.Node.Replace("ns=2;s=", "ns=2;s=Elsewhere.", StringComparison.Ordinal));
        }

        await using var log = new SourceEventLog(Source(port, plant));
        var failure = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));

        Assert.Equal(2, failure.ExitCode);
        Assert.Contains("the plant file does not describe it", failure.Message, StringComparison.Ordinal);
        Assert.Contains("TI-302", failure.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_NothingListening_RetriesWithBackoffOnTheInjectedClockThenFailsWithExitThree()
    {
        var clock = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        OpcUaSourceOptions options = Options(SimulatorProcess.FreePort());
        options.ConnectRetryDelay = TimeSpan.FromSeconds(1);
        options.ConnectRetryMaxDelay = TimeSpan.FromSeconds(3);
        options.ConnectAttempts = 4;
        var source = new OpcUaSource(_plant, options, clock, environment: _ => null);

        await using var log = new SourceEventLog(source);

        // The fake clock moves only when told: a second every 20 ms of real time until the source gives up.
        while (!log.Run.IsCompleted)
        {
            clock.Advance(TimeSpan.FromSeconds(1));
            await Task.WhenAny(log.Run, Task.Delay(20));
        }

        var failure = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));
        Assert.Equal(3, failure.ExitCode);
        Assert.Contains("after 4 attempt(s)", failure.Message, StringComparison.Ordinal);
        await log.DrainAsync();
        string[] delays = [.. log.Snapshot().OfType<SourceStateChanged>().Where(s => s.Reason!.StartsWith("attempt", StringComparison.Ordinal))
            .Select(s => s.Reason![(s.Reason!.LastIndexOf(' ') + 1)..])];
        Assert.Equal(["00:00:01", "00:00:02", "00:00:03"], delays);
    }

    [Fact]
    public async Task Run_BadSettings_FailsWithExitTwoListingEveryKey()
    {
        var options = new OpcUaSourceOptions { Endpoint = "http://plant:4840", User = "operator", Security = "Sign:Rot13", PublishingInterval = TimeSpan.Zero };
        var source = new OpcUaSource(_plant, options, TimeProvider.System, environment: _ => null);

        await using var log = new SourceEventLog(source);
        var failure = await Assert.ThrowsAsync<SignalSourceException>(() => log.Run.WaitAsync(Patience));

        Assert.Equal(2, failure.ExitCode);
        Assert.Contains("Tieflow:Source:Endpoint: 'http://plant:4840' is not an OPC UA URL", failure.Message, StringComparison.Ordinal);
        Assert.Contains("Tieflow:Source:User: user 'operator' needs the password in the environment variable TIEFLOW_OPCUA_PASSWORD", failure.Message, StringComparison.Ordinal);
        Assert.Contains("Tieflow:Source:Security:", failure.Message, StringComparison.Ordinal);
        Assert.Contains("Tieflow:Source:PublishingInterval:", failure.Message, StringComparison.Ordinal);
        Assert.Empty(log.Snapshot());
    }

    private static PlantDescription WithNode(PlantDescription plant, string tag, string node) => plant with
    {
        Units = [.. plant.Units.Select(u => u with { Instruments = [.. u.Instruments.Select(i => i.Tag == tag ? i with { Node = node } : i)] })],
    };
}
