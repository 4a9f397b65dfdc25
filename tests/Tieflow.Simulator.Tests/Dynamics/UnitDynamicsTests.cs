using FsCheck;
using FsCheck.Fluent;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Core.Dynamics;

namespace Tieflow.Simulator.Tests.Dynamics;

public sealed class UnitDynamicsTests
{
    private const double Tolerance = 1e-6;

    [Theory]
    [InlineData(CascadeArrangement.Countercurrent, UnitKind.MixerSettler, 4)]
    [InlineData(CascadeArrangement.Countercurrent, UnitKind.MixerSettler, 1)]
    [InlineData(CascadeArrangement.Crosscurrent, UnitKind.MixerSettler, 3)]
    [InlineData(CascadeArrangement.Countercurrent, UnitKind.Column, 6)]
    public void Run_AfterStepChangesWithoutFaults_SettlesOnTheCascadeSolversAnswer(CascadeArrangement arrangement, UnitKind kind, int stages)
    {
        // Feed flow, feed solute and solvent flow all move at 10 s; the train must settle on the new steady state.
        UnitDescription unit = TestPlants.Train(stages, kind, arrangement, instruments: [], solvent: arrangement == CascadeArrangement.Crosscurrent ? new MaterialStream(200, new Ternary(0, 0, 1)) : null);
        // A counter-current train near its pinch has slow modes (many residence times): a long run with long steps.
        Scenario scenario = TestPlants.Scenario(unit, duration: TimeSpan.FromHours(kind == UnitKind.Column ? 240 : 80), step: TimeSpan.FromSeconds(kind == UnitKind.Column ? 60 : 10), disturbances:
        [
            new Disturbance(DisturbanceKind.FeedFlow, null, TimeSpan.FromSeconds(10), 1100, TimeSpan.Zero),
            new Disturbance(DisturbanceKind.FeedSolute, null, TimeSpan.FromSeconds(10), 0.27, TimeSpan.FromMinutes(30)),
            new Disturbance(DisturbanceKind.SolventFlow, null, TimeSpan.FromSeconds(10), arrangement == CascadeArrangement.Crosscurrent ? 210 : 480, TimeSpan.Zero),
        ]);
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        while (!sim.Finished)
        {
            sim.Step(sink);
        }

        UnitSimulation u = sim.Unit("X300");
        u.Prepare(scenario.Duration.TotalSeconds);
        var feed = new MaterialStream(1100, new Ternary(0.27, 0.73, 0));
        var solvent = new MaterialStream(arrangement == CascadeArrangement.Crosscurrent ? 210 : 480, new Ternary(0, 0, 1));
        CascadeResult expected = new CascadeSolver(unit.Equilibrium, 298.15).Solve(arrangement, feed, solvent, unit.Nominal.Efficiencies);
        for (int n = 1; n <= stages; n++)
        {
            AssertStream(expected.Stages[n - 1].Raffinate, u.Dynamics.Raffinate(n), $"raffinate-{n}");
            AssertStream(expected.Stages[n - 1].Extract, u.Dynamics.Extract(n), $"extract-{n}");
        }

        AssertStream(expected.Raffinate, u.Dynamics.FinalRaffinate, "raffinate");
        AssertStream(expected.Extract, u.Dynamics.FinalExtract, "extract");
    }

    [Fact]
    public void Start_IsTheCascadeSolversSteadyState_AndStaysThere()
    {
        UnitDescription unit = TestPlants.Train(instruments: []);
        var sim = new PlantSimulation(TestPlants.Scenario(unit, duration: TimeSpan.FromHours(1)));
        while (!sim.Finished)
        {
            sim.Step(new RecordingSink());
        }

        UnitSimulation u = sim.Unit("X300");
        u.Prepare(3600);
        CascadeResult expected = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(TestPlants.Feed, TestPlants.Solvent, unit.Nominal.Efficiencies);
        for (int n = 1; n <= 4; n++)
        {
            AssertStream(expected.Stages[n - 1].Raffinate, u.Dynamics.Raffinate(n), $"raffinate-{n}");
            AssertStream(expected.Stages[n - 1].Extract, u.Dynamics.Extract(n), $"extract-{n}");
        }
    }

    [Fact]
    public void StepInFeedFlow_MixerRespondsWithTheTimeConstantHoldupOverThroughput()
    {
        // One equilibrium stage without a settler: the mixer is a well-mixed tank, so its composition moves as
        // 1 - exp(-t / tau) with tau = hold-up / throughput after a step in the feed.
        UnitDescription unit = TestPlants.Train(1, instruments: [], holdup: new Holdup(450, 0)) with
        {
            Nominal = new NominalOperation(TestPlants.Feed, TestPlants.Solvent, 298.15, [1.0]),
        };
        Scenario scenario = TestPlants.Scenario(unit, duration: TimeSpan.FromHours(3), step: TimeSpan.FromSeconds(1), disturbances:
            [new Disturbance(DisturbanceKind.FeedSolute, null, TimeSpan.FromMinutes(1), 0.25, TimeSpan.Zero)]);
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        var z = new List<double>();
        while (!sim.Finished)
        {
            sim.Step(sink);
            Ternary m = sim.Unit("X300").Dynamics.StageInventory(1);
            z.Add(m.Solute / m.Sum);
        }

        double tauSeconds = 450 / 1450.0 * 3600;
        double z0 = z[0], zEnd = (1000 * 0.25) / 1450.0;
        foreach (double t in new[] { 0.5 * tauSeconds, tauSeconds, 3 * tauSeconds })
        {
            double expected = 1 - Math.Exp(-t / tauSeconds);
            double actual = (z[60 + (int)t] - z0) / (zEnd - z0);
            Assert.True(Math.Abs(actual - expected) < 0.01, $"at t = {t / tauSeconds:F1} tau the mixer has moved {actual:F4} of the way, expected {expected:F4}");
        }
    }

    [Fact]
    public void StepInFeedSolute_DoesNotJumpAtTheRaffinateEnd()
    {
        // A step at the feed end reaches the final raffinate through four stages of hold-up.
        UnitDescription unit = TestPlants.Train(instruments: []);
        Scenario scenario = TestPlants.Scenario(unit, duration: TimeSpan.FromHours(60), step: TimeSpan.FromSeconds(10), disturbances:
            [new Disturbance(DisturbanceKind.FeedSolute, null, TimeSpan.FromMinutes(1), 0.33, TimeSpan.Zero)]);
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        while (!sim.Finished)
        {
            sim.Step(sink);
        }

        double[] x = sink.Truth.Select(t => t.RaffinateSolute).ToArray();
        double total = x[^1] - x[0];
        Assert.True(total > 0, "more solute in the feed must give more in the raffinate at the new steady state");
        Assert.True(Math.Abs(x[6] - x[0]) < 0.01 * total, $"5 minutes after the step the raffinate has moved {(x[6] - x[0]) / total:P2} of the way");
        Assert.True(Math.Abs(x[^1] - x[^61]) < 1e-3 * total, "the train must have settled after 60 hours");
    }

    [Fact]
    public void Temperature_MovesTheEquilibriumOfAnActivityModelOnly()
    {
        UnitDescription tieLines = TestPlants.Train(instruments: []);
        Scenario scenario = TestPlants.Scenario(tieLines, duration: TimeSpan.FromHours(1), step: TimeSpan.FromSeconds(10), disturbances:
            [new Disturbance(DisturbanceKind.Temperature, null, TimeSpan.Zero, 300.15, TimeSpan.Zero)]);
        var sim = new PlantSimulation(scenario);
        var sink = new RecordingSink();
        while (!sim.Finished)
        {
            sim.Step(sink);
        }

        // Tie lines measured at one temperature cannot say how it moves the envelope: the state stays put.
        Assert.Equal(sink.Truth[0].RaffinateSolute, sink.Truth[^1].RaffinateSolute, 12);
    }

    [FsCheck.Xunit.Property(MaxTest = 60, Replay = "(23,29)")]
    public Property Step_EveryStageBalanceClosesWithAccumulation()
    {
        Gen<(double Feed, double Solvent, double Solute, double Mixer, double Settler, int Seconds)> gen =
            from feed in Gen.Choose(700, 1400)
            from solvent in Gen.Choose(300, 700)
            from solute in Gen.Choose(20, 34)
            from mixer in Gen.Choose(20, 900)
            from settler in Gen.Choose(0, 3000)
            from seconds in Gen.Choose(1, 120)
            select ((double)feed, (double)solvent, solute / 100.0, (double)mixer, (double)settler, seconds);
        return Prop.ForAll(gen.ToArbitrary(), c =>
        {
            UnitDescription unit = TestPlants.Train(instruments: [], holdup: new Holdup(c.Mixer, c.Settler));
            var dynamics = new UnitDynamics(unit, TestPlants.NominalInputs(unit));

            // New inputs and an entrainment fault, so that the stages are away from steady state.
            UnitInputs inputs = TestPlants.NominalInputs(unit, new MaterialStream(c.Feed, new Ternary(c.Solute, 1 - c.Solute, 0)), new MaterialStream(c.Solvent, new Ternary(0, 0, 1)));
            inputs.Entrainment[1] = 0.02;
            for (int step = 0; step < 5; step++)
            {
                dynamics.Evaluate(inputs);
                var before = new Ternary[4];
                var net = new Ternary[4];
                for (int n = 1; n <= 4; n++)
                {
                    before[n - 1] = dynamics.StageInventory(n);
                    net[n - 1] = dynamics.StageInflow(n, inputs) - dynamics.StageOutflow(n);
                }

                // One step at a time (no substeps): the balance must hold for exactly the flows that were reported.
                double hours = Math.Min(c.Seconds, 0.4 * ShortestTimeConstantSeconds(c.Mixer, c.Settler, c.Feed + c.Solvent)) / 3600.0;
                dynamics.Advance(hours * 3600);
                for (int n = 1; n <= 4; n++)
                {
                    Ternary accumulation = dynamics.StageInventory(n) - before[n - 1];
                    Ternary expected = hours * net[n - 1];
                    double scale = c.Mixer + c.Settler;
                    if (Ternary.MaxDifference(accumulation, expected) > 1e-9 * scale)
                    {
                        return false.Label($"stage {n}, step {step}: accumulation {accumulation} but in - out over the step is {expected}");
                    }
                }
            }

            return true.ToProperty();
        });
    }

    [Fact]
    public void Advance_KeepsTheWholeUnitBalance_OverAnHourOfTransient()
    {
        UnitDescription unit = TestPlants.Train(instruments: []);
        var dynamics = new UnitDynamics(unit, TestPlants.NominalInputs(unit));
        UnitInputs inputs = TestPlants.NominalInputs(unit, TestPlants.SteppedFeed);
        Ternary start = Total(dynamics);
        Ternary netIn = default;
        for (int s = 0; s < 3600; s++)
        {
            dynamics.Evaluate(inputs);
            netIn += (1 / 3600.0) * (inputs.Feed.ComponentFlows + inputs.Solvent.ComponentFlows - dynamics.FinalRaffinate.ComponentFlows - dynamics.FinalExtract.ComponentFlows);
            dynamics.Advance(1);
        }

        Assert.True(Ternary.MaxDifference(Total(dynamics) - start, netIn) < 1e-8, $"unit inventory changed by {Total(dynamics) - start}, net inflow {netIn}");
    }

    private static Ternary Total(UnitDynamics d)
    {
        Ternary sum = default;
        for (int n = 1; n <= d.Stages; n++)
        {
            sum += d.StageInventory(n);
        }

        return sum;
    }

    private static double ShortestTimeConstantSeconds(double mixer, double settler, double throughput)
    {
        // The smallest tank is the mixer or the smaller settler layer (the raffinate layer here); flows are at most about the throughput.
        double smallest = settler > 0 ? Math.Min(mixer, settler * 0.25) : mixer;
        return 3600 * smallest / (1.3 * throughput);
    }

    private static void AssertStream(MaterialStream expected, MaterialStream actual, string name)
    {
        Assert.True(Math.Abs(expected.Flow - actual.Flow) <= Tolerance * Math.Max(1, expected.Flow), $"{name}: flow {actual.Flow}, expected {expected.Flow}");
        Assert.True(Ternary.MaxDifference(expected.Composition, actual.Composition) <= Tolerance, $"{name}: composition {actual.Composition}, expected {expected.Composition}");
    }
}
