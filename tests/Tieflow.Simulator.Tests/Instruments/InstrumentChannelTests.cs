using Tieflow.Core.Chemistry;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Tests.Instruments;

public sealed class InstrumentChannelTests
{
    private static readonly DateTimeOffset Start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    [Fact]
    public void FlowMeter_HasGaussianNoiseOfItsSigma_AroundTheTruth()
    {
        RecordingSink sink = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(3)));
        double[] v = sink.Of("FI-301").Select(s => s.Value).ToArray();
        double mean = v.Average();
        double sd = Math.Sqrt(v.Sum(x => (x - mean) * (x - mean)) / (v.Length - 1));
        Assert.Equal(1000, mean, 0.5);
        Assert.InRange(sd, 8 * 0.97, 8 * 1.03);
        double within = v.Count(x => Math.Abs(x - 1000) <= 8) / (double)v.Length;
        Assert.InRange(within, 0.66, 0.70);
    }

    [Fact]
    public void Analyzer_QuantisesToItsResolution()
    {
        RecordingSink sink = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(1)));
        Assert.All(sink.Of("AI-311"), s => Assert.Equal(Math.Round(s.Value, 2), s.Value));
    }

    [Fact]
    public void Reading_OutsideTheTransmitterRange_IsBadAndClamped()
    {
        UnitDescription unit = TestPlants.Train(instruments: [TestPlants.Flow("FI-301", UnitStream.Feed, 8, 0, 900)]);
        RecordingSink sink = Run(TestPlants.Scenario(unit, duration: TimeSpan.FromMinutes(10)));
        Assert.All(sink.Of("FI-301"), s =>
        {
            Assert.Equal(SignalQuality.Bad, s.Quality);
            Assert.Equal(900, s.Value);
        });
    }

    [Fact]
    public void Analyzer_HoldsBetweenUpdates_AndDescribesTheProcessItsDeadTimeEarlier()
    {
        // A feed analyzer (almost no noise) updated every 6 min at 1 min past, 4 min dead time; the feed solute steps at 10:00.
        var analyzer = new Instrument
        {
            Tag = "AI-301",
            Node = "ns=2;s=X300.AI301.PV",
            Quantity = InstrumentQuantity.Fraction,
            Stream = UnitStream.Feed,
            Component = ComponentRole.Solute,
            Unit = TestPlants.Fraction,
            Sigma = 1e-12,
            DeadTime = TimeSpan.FromMinutes(4),
            UpdateInterval = TimeSpan.FromMinutes(6),
            UpdateOffset = TimeSpan.FromMinutes(1),
        };
        UnitDescription unit = TestPlants.Train(instruments: [analyzer]);
        RecordingSink sink = Run(TestPlants.Scenario(unit, duration: TimeSpan.FromMinutes(40), disturbances:
            [new Disturbance(DisturbanceKind.FeedSolute, null, TimeSpan.FromMinutes(10), 0.25, TimeSpan.Zero)]));
        double At(double minutes) => sink.Of("AI-301").Single(s => s.Time == Start.AddSeconds(Math.Round(minutes * 60))).Value;

        int changes = sink.Of("AI-301").Zip(sink.Of("AI-301").Skip(1)).Count(p => p.First.Value != p.Second.Value);
        Assert.True(changes <= 7, $"a value only at each update: {changes} changes in 40 minutes");
        Assert.Equal(0.3, At(13), 9);            // update at 13 min describes 9 min: before the step
        Assert.Equal(0.3, At(18.9), 9);          // held until the next update
        Assert.Equal(0.25, At(19), 9);           // update at 19 min describes 15 min: after the step
    }

    [Fact]
    public void Labs_AreDrawnEveryInterval_ReportedAfterTheDelay_WithTheirNoise()
    {
        RecordingSink sink = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(24), step: TimeSpan.FromSeconds(10), lab: new LabSchedule(TimeSpan.FromHours(4), TimeSpan.FromMinutes(90), 0.0005)));

        // Drawn at 0, 4, ..., 20 h; the last is reported at 21:30, inside the run; two points each.
        Assert.Equal(12, sink.Labs.Count);
        Assert.All(sink.Labs, l => Assert.Equal(TimeSpan.FromMinutes(90), l.Reported - l.Sampled));
        Assert.Equal([0, 4, 8, 12, 16, 20], sink.Labs.Where(l => l.Stream == "raffinate").Select(l => (l.Sampled - Start).TotalHours));
        double truth = sink.Truth[0].RaffinateSolute;
        Assert.All(sink.Labs.Where(l => l.Stream == "raffinate"), l =>
        {
            Assert.Equal("acetone", l.Component);
            Assert.InRange(l.Value, truth - 0.0025, truth + 0.0025);
        });
    }

    [Fact]
    public void Truth_IsSampledOnceAMinute()
    {
        RecordingSink sink = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(1), step: TimeSpan.FromSeconds(7)));
        Assert.Equal(60, sink.Truth.Count);
        Assert.Equal(Start, sink.Truth[0].Time);
        Assert.All(sink.Truth.Zip(sink.Truth.Skip(1)), p => Assert.InRange((p.Second.Time - p.First.Time).TotalSeconds, 56, 63));
    }

    private static RecordingSink Run(Scenario scenario)
    {
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        while (!sim.Finished)
        {
            sim.Step(sink);
        }

        return sink;
    }
}
