using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Tests.Faults;

/// <summary>One test per fault kind and per disturbance kind, each asserting the physical effect its definition gives.</summary>
public sealed class FaultTests
{
    [Fact]
    public void Entrainment_OfRaffinate_RaisesTheExtractsWaterReadingAboveTheBinodal()
    {
        Fault fault = new() { Kind = FaultKind.Entrainment, Stage = 1, Start = TimeSpan.FromHours(1), Value = 0.02 };
        (PlantSimulation sim, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(3), faults: [fault]));

        UnitSimulation unit = sim.Unit("X300");
        unit.Prepare(3 * 3600);
        MaterialStream extract = unit.Dynamics.FinalExtract;
        IPhaseEquilibrium model = unit.Unit.Equilibrium;
        double binodalWater = model.TieLineFromExtract(extract.Composition.Solute, 298.15).Extract.Diluent;

        // The true extract lies inside the two-phase region by the carried fraction (lever rule).
        EnvelopePosition position = EnvelopePosition.Locate(model, extract.Composition, 298.15);
        Assert.True(position.Inside);
        Assert.Equal(0.02, position.MinorPhaseFraction, 3);

        // The water analyzer (percent) reads well above the binodal's water fraction once the fault acts, and on it before.
        double before = Mean(sink.Of("AI-320").Where(s => s.Time < Start.AddHours(1)));
        double after = Mean(sink.Of("AI-320").Where(s => s.Time > Start.AddHours(2.5)));
        double binodalBefore = model.TieLineFromExtract(unit.Dynamics.InitialCascade.Extract.Composition.Solute, 298.15).Extract.Diluent;
        Assert.True(Math.Abs(before - (100 * binodalBefore)) < 0.02, $"before the fault the water reading {before} % must sit on the binodal ({100 * binodalBefore:F3} %)");
        Assert.True(after > (100 * binodalWater) + 1.0, $"water reading {after} % must rise above the binodal's {100 * binodalWater:F3} % by about 2 % of the raffinate's water");
        Assert.All(sink.Truth.Where(t => t.Time >= Start.AddHours(1)), t => Assert.Equal(0.02, t.Entrainment[0]));
    }

    [Fact]
    public void Entrainment_OfExtract_CarriesSolventIntoTheRaffinate()
    {
        Fault fault = new() { Kind = FaultKind.Entrainment, Stage = 4, Start = TimeSpan.FromHours(1), Value = 0.01, Carried = EntrainedPhase.Extract };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(3), faults: [fault]));

        double before = Mean(sink.Of("AI-321").Where(s => s.Time < Start.AddHours(1)));
        double after = Mean(sink.Of("AI-321").Where(s => s.Time > Start.AddHours(2.5)));
        Assert.True(after - before > 0.5, $"solvent in the raffinate must rise by about 1 % of the extract's solvent: {before} % -> {after} %");
    }

    [Fact]
    public void SolventLoss_OpensTheSolventBalanceByTheLeakedRate()
    {
        Fault fault = new() { Kind = FaultKind.SolventLoss, Start = TimeSpan.FromMinutes(1), Value = 0.01 };
        (PlantSimulation sim, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(60), step: TimeSpan.FromSeconds(10), faults: [fault]));

        UnitSimulation unit = sim.Unit("X300");
        unit.Prepare(60 * 3600);
        double metered = unit.SolventSet.ComponentFlows.Solvent;
        double leaving = unit.Dynamics.FinalRaffinate.ComponentFlows.Solvent + unit.Dynamics.FinalExtract.ComponentFlows.Solvent;
        Assert.Equal(4.5, metered - leaving, 3);
        Assert.Equal(4.5, sink.Truth[^1].SolventLossRate, 9);
        Assert.Equal(0, sink.Truth[0].SolventLossRate);

        // The solvent meter still reads the flow sent, not the flow that arrives.
        Assert.Equal(450, Mean(sink.Of("FI-302").Where(s => s.Time > Start.AddHours(1))), 0);
    }

    [Fact]
    public void SensorBias_OffsetsTheReadingByTheBias()
    {
        Fault fault = new() { Kind = FaultKind.SensorBias, Tag = "FI-301", Start = TimeSpan.FromHours(1), Value = 25 };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(2), faults: [fault]));

        // 3600 readings of sigma 8: the mean is within 8 / 60 * 4 of the truth.
        Assert.Equal(1000, Mean(sink.Of("FI-301").Where(s => s.Time < Start.AddHours(1))), 0.6);
        Assert.Equal(1025, Mean(sink.Of("FI-301").Where(s => s.Time >= Start.AddHours(1))), 0.6);
    }

    [Fact]
    public void SensorDrift_GrowsPerHour()
    {
        Fault fault = new() { Kind = FaultKind.SensorDrift, Tag = "FI-301", Start = TimeSpan.FromHours(1), Value = 10 };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(4), faults: [fault]));

        for (int hour = 1; hour < 4; hour++)
        {
            double mean = Mean(sink.Of("FI-301").Where(s => s.Time >= Start.AddHours(hour) && s.Time < Start.AddHours(hour + 1)));
            Assert.Equal(1000 + (10 * (hour - 0.5)), mean, 0.6);
        }
    }

    [Fact]
    public void SensorStuck_StopsChangingWithGoodQuality()
    {
        Fault fault = new() { Kind = FaultKind.SensorStuck, Tag = "FI-301", Start = TimeSpan.FromHours(1) };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(2), faults: [fault]));

        SignalSample[] stuck = sink.Of("FI-301").Where(s => s.Time >= Start.AddHours(1)).ToArray();
        SignalSample last = sink.Of("FI-301").Last(s => s.Time < Start.AddHours(1));
        Assert.All(stuck, s => Assert.Equal(last.Value, s.Value));
        Assert.All(stuck, s => Assert.Equal(SignalQuality.Good, s.Quality));
        Assert.True(sink.Of("FI-301").Where(s => s.Time < Start.AddHours(1)).Select(s => s.Value).Distinct().Count() > 100, "before the fault the reading is noisy");
    }

    [Fact]
    public void SignalBad_GivesBadQualityUntilItEnds()
    {
        Fault fault = new() { Kind = FaultKind.SignalBad, Tag = "AI-314", Start = TimeSpan.FromMinutes(30), End = TimeSpan.FromMinutes(50) };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(1), faults: [fault]));

        foreach (SignalSample s in sink.Of("AI-314"))
        {
            bool during = s.Time >= Start.AddMinutes(30) && s.Time < Start.AddMinutes(50);
            Assert.Equal(during ? SignalQuality.Bad : SignalQuality.Good, s.Quality);
        }
    }

    [Fact]
    public void SignalFrozen_KeepsGoodQualityAndAConstantValueUntilItEnds()
    {
        Fault fault = new() { Kind = FaultKind.SignalFrozen, Tag = "FI-303", Start = TimeSpan.FromMinutes(20), End = TimeSpan.FromMinutes(40) };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(1), faults: [fault]));

        SignalSample[] frozen = sink.Of("FI-303").Where(s => s.Time >= Start.AddMinutes(20) && s.Time < Start.AddMinutes(40)).ToArray();
        Assert.Single(frozen.Select(s => s.Value).Distinct());
        Assert.All(frozen, s => Assert.Equal(SignalQuality.Good, s.Quality));
        Assert.True(sink.Of("FI-303").Where(s => s.Time >= Start.AddMinutes(40)).Select(s => s.Value).Distinct().Count() > 100, "after the fault the reading moves again");
    }

    [Fact]
    public void StageEfficiency_RampsToItsValue_AndRaisesTheRaffinate()
    {
        Fault fault = new() { Kind = FaultKind.StageEfficiency, Stage = 3, Start = TimeSpan.FromHours(1), Ramp = TimeSpan.FromHours(2), Value = 0.55 };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(12), step: TimeSpan.FromSeconds(5), faults: [fault]));

        TruthSample At(double hours) => sink.Truth.Single(t => t.Time == Start.AddHours(hours));
        Assert.Equal(0.9, At(0.5).StageEfficiency[2], 12);
        Assert.Equal(0.9 + ((0.55 - 0.9) * 0.5), At(2).StageEfficiency[2], 9);
        Assert.Equal(0.55, At(4).StageEfficiency[2], 12);
        Assert.Equal(0.92, At(4).StageEfficiency[0], 12);
        Assert.True(At(11.5).RaffinateSolute > At(0.5).RaffinateSolute + 0.001, "a poorer stage leaves more solute in the raffinate");
    }

    [Fact]
    public void StageEfficiency_WithoutAStage_ActsOnEveryStage()
    {
        Fault fault = new() { Kind = FaultKind.StageEfficiency, Start = TimeSpan.FromMinutes(10), Value = 0.7 };
        (_, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromMinutes(20), faults: [fault]));
        Assert.All(sink.Truth[^1].StageEfficiency, e => Assert.Equal(0.7, e));
    }

    [Theory]
    [InlineData(DisturbanceKind.FeedFlow, "FI-301", 1200.0, 1.0)]
    [InlineData(DisturbanceKind.SolventFlow, "FI-302", 500.0, 1.0)]
    [InlineData(DisturbanceKind.Temperature, "TI-302", 301.15, 1.0)]
    public void Disturbance_MovesTheSetValueOverItsRamp(DisturbanceKind kind, string tag, double value, double rampHours)
    {
        Disturbance d = new(kind, null, TimeSpan.FromHours(1), value, TimeSpan.FromHours(rampHours));
        (PlantSimulation sim, RecordingSink sink) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(3), disturbances: [d]));
        Instrument instrument = sim.Scenario.Plant.Units[0].FindInstrument(tag)!;
        double nominal = kind switch { DisturbanceKind.FeedFlow => 1000, DisturbanceKind.SolventFlow => 450, _ => 298.15 };

        double MeanAround(double hours) => instrument.Unit.ToBase(Mean(sink.Of(tag).Where(s => Math.Abs((s.Time - Start.AddHours(hours)).TotalMinutes) <= 5)));
        double tolerance = 4 * instrument.SigmaBase / Math.Sqrt(600);
        Assert.Equal(nominal, MeanAround(0.5), tolerance);
        Assert.Equal(nominal + ((value - nominal) * 0.5), MeanAround(1.5), tolerance);
        Assert.Equal(value, MeanAround(2.5), tolerance);
    }

    [Fact]
    public void Disturbance_FeedSolute_ChangesTheFeedCompositionWithDiluentMakingUpTheRest()
    {
        Disturbance d = new(DisturbanceKind.FeedSolute, null, TimeSpan.FromMinutes(10), 0.25, TimeSpan.FromMinutes(20));
        (PlantSimulation sim, _) = Run(TestPlants.Scenario(duration: TimeSpan.FromHours(1), disturbances: [d]));
        UnitSimulation unit = sim.Unit("X300");
        unit.Prepare(20 * 60);
        Assert.Equal(0.275, unit.Inputs.Feed.Composition.Solute, 12);
        Assert.Equal(0.725, unit.Inputs.Feed.Composition.Diluent, 12);
        unit.Prepare(45 * 60);
        Assert.Equal(0.25, unit.Inputs.Feed.Composition.Solute, 12);
    }

    private static DateTimeOffset Start => new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    private static double Mean(IEnumerable<SignalSample> samples) => samples.Average(s => s.Value);

    private static (PlantSimulation Simulation, RecordingSink Sink) Run(Scenario scenario)
    {
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        while (!sim.Finished)
        {
            sim.Step(sink);
        }

        return (sim, sink);
    }
}
