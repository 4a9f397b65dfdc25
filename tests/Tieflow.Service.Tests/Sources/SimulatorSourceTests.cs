using System.Threading.Channels;
using Microsoft.Extensions.Time.Testing;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Service.Sources;
using Tieflow.Service.Sources.Simulator;

namespace Tieflow.Service.Tests.Sources;

/// <summary>The in-process simulated plant keeps pace with its clock: a fake clock that does not move holds it back.</summary>
public sealed class SimulatorSourceTests
{
    private static readonly TimeSpan Patience = TimeSpan.FromSeconds(60);

    private static Scenario ShortScenario()
    {
        Scenario s = ScenarioReader.Load(Path.Combine(RepositoryPaths.ConfigSamples, "scenarios", "clean.scenario.json"));
        return s with { Duration = TimeSpan.FromMinutes(20), Plant = s.Plant with { Units = [s.Plant.FindUnit("X300")!] } };
    }

    [Fact]
    public async Task RunAsync_FakeClockAt60x_SimulatedTimeFollowsTheClock()
    {
        Scenario scenario = ShortScenario();
        var clock = new FakeTimeProvider(new DateTimeOffset(2030, 1, 1, 0, 0, 0, TimeSpan.Zero));
        var source = new SimulatorSource(scenario, speed: 60, clock);
        var channel = Channel.CreateUnbounded<SourceEvent>();
        using var stop = new CancellationTokenSource();
        Task run = source.RunAsync(channel.Writer, stop.Token);
        var latest = DateTimeOffset.MinValue;
        SourceStateChanged? first = null;

        async Task ReadUntil(DateTimeOffset reached)
        {
            using var wait = new CancellationTokenSource(Patience);
            while (latest < reached)
            {
                SourceEvent e = await channel.Reader.ReadAsync(wait.Token);
                first ??= e as SourceStateChanged;
                if (e is SampleArrived a && a.Sample.Time > latest)
                {
                    latest = a.Sample.Time;
                }
            }
        }

        // With the clock standing still, only the first step is taken.
        await ReadUntil(scenario.Start);
        await Task.Delay(200);
        while (channel.Reader.TryRead(out SourceEvent? e))
        {
            Assert.True(e is not SampleArrived a || a.Sample.Time <= scenario.Start.AddSeconds(1), $"the source ran ahead of its clock: {e}");
        }

        // Five seconds of the clock at 60x are five simulated minutes.
        clock.Advance(TimeSpan.FromSeconds(5));
        await ReadUntil(scenario.Start.AddMinutes(5));
        await Task.Delay(200);
        while (channel.Reader.TryRead(out SourceEvent? e))
        {
            Assert.True(e is not SampleArrived a || a.Sample.Time <= scenario.Start.AddMinutes(5).AddSeconds(1), $"the source ran ahead of its clock: {e}");
        }

        Assert.Equal(SourceState.Connected, first!.State);
        Assert.Equal(scenario.Start, first.Time);
        await stop.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => run);
    }

    [Fact]
    public async Task RunAsync_HugeSpeed_RunsTheScenarioToItsEndAndReturns()
    {
        Scenario scenario = ShortScenario();
        var source = new SimulatorSource(scenario, speed: 1e9, TimeProvider.System);
        var channel = Channel.CreateUnbounded<SourceEvent>();
        using var limit = new CancellationTokenSource(Patience);

        await source.RunAsync(channel.Writer, limit.Token);

        int samples = 0;
        var last = DateTimeOffset.MinValue;
        while (channel.Reader.TryRead(out SourceEvent? e))
        {
            if (e is SampleArrived a)
            {
                samples++;
                last = a.Sample.Time > last ? a.Sample.Time : last;
            }
        }

        Assert.Equal(scenario.End.AddSeconds(-1), last);
        Assert.True(samples >= 1200 * 4, $"{samples} samples in 20 minutes of 1 s steps");
    }
}
