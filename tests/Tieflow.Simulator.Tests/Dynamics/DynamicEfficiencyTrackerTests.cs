using Tieflow.Core.Chemistry;
using Tieflow.Core.Dynamics;
using Tieflow.Core.Monitoring.Efficiency;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;
using Xunit.Abstractions;

namespace Tieflow.Simulator.Tests.Dynamics;

/// <summary>
/// The analysis's dynamic efficiency fit (<see cref="DynamicEfficiencyTracker"/>) against a simulated train whose
/// efficiencies are known: the plant runs at 5 s steps with the true inputs, the tracker sees only 30-minute window
/// means of the stage raffinate analyzers and the final extract analyzer, with seeded analyzer noise.
/// </summary>
public sealed class DynamicEfficiencyTrackerTests(ITestOutputHelper output)
{
    private const double WindowSeconds = 1800;
    private const double RaffinateSigma = 2e-4;
    private const double ExtractSigma = 4e-4;

    [Fact]
    public void Add_WhileTheTrainSettlesAfterAFeedChange_FollowsTheUnchangedEfficiencies()
    {
        // A feed change of 20 % in flow and 5 points in solute: the stages settle over hours, which the steady-state
        // gate sits out. The fit over the transient must say the stages are as good as before.
        UnitDescription unit = TestPlants.Train(instruments: []);
        double[] truth = [.. unit.Nominal.Efficiencies];
        var plant = new Plant(unit, truth);
        var tracker = new DynamicEfficiencyTracker(unit, TimeSpan.FromSeconds(WindowSeconds));
        var random = new Random(41);
        tracker.AddSteady(plant.Window(WindowSeconds, random), truth);
        plant.Inputs.Feed = new MaterialStream(1200, new Ternary(0.25, 0.75, 0));
        double worst = 0, squares = 0;
        int count = 0;
        for (int w = 0; w < 16; w++)
        {
            DynamicFit? fit = tracker.Add(plant.Window(WindowSeconds, random));
            Assert.NotNull(fit);
            for (int k = 0; k < unit.Stages; k++)
            {
                EstimatedValue e = fit.Efficiencies[k]!.Value;
                double z = (e.Value - truth[k]) / e.Sigma;
                worst = Math.Max(worst, Math.Abs(e.Value - truth[k]));
                squares += z * z;
                count++;
                Assert.True(Math.Abs(z) <= 4, $"window {w + 1}, stage {k + 1}: {e.Value:F3} (sigma {e.Sigma:F3}) against {truth[k]}");
            }
        }

        // The sigmas say what the errors are: their normalised root mean square near 1 (windows of one horizon share
        // data, so the bounds are wide), neither hiding a bias nor claiming more than the analyzers can tell.
        double rms = Math.Sqrt(squares / count);
        output.WriteLine($"largest error over 8 h of settling: {worst:F4}; normalised RMS {rms:F2}");
        Assert.InRange(rms, 0.4, 1.6);
    }

    [Fact]
    public void Add_AfterOneStageLosesEfficiency_NamesThatStageWithinTwoHours()
    {
        // Stage 3 drops from 0.90 to 0.60 (a failing mixer drive, say) while the inlets stay as they were.
        UnitDescription unit = TestPlants.Train(instruments: []);
        double[] truth = [.. unit.Nominal.Efficiencies];
        var plant = new Plant(unit, truth);
        var tracker = new DynamicEfficiencyTracker(unit, TimeSpan.FromSeconds(WindowSeconds));
        var random = new Random(43);
        tracker.AddSteady(plant.Window(WindowSeconds, random), truth);
        tracker.AddSteady(plant.Window(WindowSeconds, random), truth);
        plant.Inputs.Efficiencies[2] = 0.60;
        DynamicFit? fit = null;
        for (int w = 1; w <= 8; w++)
        {
            fit = tracker.Add(plant.Window(WindowSeconds, random));
            Assert.NotNull(fit);
            output.WriteLine($"{w * 0.5:F1} h: " + string.Join(" ", fit.Efficiencies.Select(e => $"{e!.Value.Value:F3}+-{e.Value.Sigma:F3}")));
            if (w == 4)
            {
                // Two hours after the drop: stage 3 clearly below its old value, the others where they were.
                Assert.True(fit.Efficiencies[2]!.Value.Value < 0.75, $"stage 3 at 2 h: {fit.Efficiencies[2]}");
                for (int k = 0; k < unit.Stages; k++)
                {
                    if (k != 2)
                    {
                        Assert.True(Math.Abs(fit.Efficiencies[k]!.Value.Value - truth[k]) <= 0.04, $"stage {k + 1} at 2 h: {fit.Efficiencies[k]}");
                    }
                }
            }
        }

        // Four hours after: stage 3 at its new value.
        Assert.True(Math.Abs(fit!.Efficiencies[2]!.Value.Value - 0.60) <= 0.04, $"stage 3 at 4 h: {fit.Efficiencies[2]}");
    }

    [Fact]
    public void Add_BeforeASteadyWindow_HasNoStartingStateAndGivesNothing()
    {
        UnitDescription unit = TestPlants.Train(instruments: []);
        var plant = new Plant(unit, [.. unit.Nominal.Efficiencies]);
        var tracker = new DynamicEfficiencyTracker(unit, TimeSpan.FromSeconds(WindowSeconds));
        Assert.Null(tracker.Add(plant.Window(WindowSeconds, new Random(1))));
        Assert.False(tracker.Anchored);
    }

    /// <summary>The simulated train and its analyzers' window means.</summary>
    private sealed class Plant
    {
        private readonly UnitDynamics _dynamics;

        public Plant(UnitDescription unit, double[] efficiencies)
        {
            Inputs = new UnitInputs(unit.Stages) { Feed = TestPlants.Feed, Solvent = TestPlants.Solvent, TemperatureKelvin = 298.15 };
            efficiencies.CopyTo(Inputs.Efficiencies, 0);
            _dynamics = new UnitDynamics(unit, Inputs);
        }

        public UnitInputs Inputs { get; }

        public TrackerWindow Window(double seconds, Random random)
        {
            int n = _dynamics.Stages;
            var raffinate = new double[n];
            double extract = 0;
            int samples = 0;
            for (int s = 0; s < seconds; s += 5)
            {
                _dynamics.Evaluate(Inputs);
                if (s % 60 == 0)
                {
                    for (int k = 0; k < n; k++)
                    {
                        raffinate[k] += _dynamics.Raffinate(k + 1).Composition.Solute;
                    }

                    extract += _dynamics.FinalExtract.Composition.Solute;
                    samples++;
                }

                _dynamics.Advance(5);
            }

            EstimatedValue?[] measured = [.. raffinate.Select(x => (EstimatedValue?)new EstimatedValue((x / samples) + (RaffinateSigma * Gaussian(random)), RaffinateSigma))];
            return new TrackerWindow(Inputs.Feed, Inputs.Solvent, Inputs.TemperatureKelvin, measured, new EstimatedValue((extract / samples) + (ExtractSigma * Gaussian(random)), ExtractSigma));
        }

        private static double Gaussian(Random r) => Math.Sqrt(-2 * Math.Log(1 - r.NextDouble())) * Math.Cos(2 * Math.PI * r.NextDouble());
    }
}
