using Tieflow.Core.Cascade;
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

    [Theory]
    [InlineData(4, 1, CascadeArrangement.Countercurrent)]
    [InlineData(6, 2, CascadeArrangement.Countercurrent)]
    [InlineData(4, 3, CascadeArrangement.Countercurrent)]
    [InlineData(4, 2, CascadeArrangement.Crosscurrent)]
    public void Add_ReusingTheLastFitsRuns_GivesThePlainFitsNumbers(int stages, int horizon, CascadeArrangement arrangement)
    {
        // Through a feed change, a stage losing efficiency, steady windows in between and a temperature step, the fit
        // that takes over the last fit's final run and starts its splits from the base run's (ReuseRuns) against the
        // fit that runs every pass in full. The splits agree within the splitter's tolerance (1e-13 relative), which
        // moves the efficiencies by about 1e-12 in these runs; the bounds leave a factor of about 100.
        UnitDescription unit = TestPlants.Train(stages, arrangement: arrangement, instruments: []);
        double[] truth = [.. unit.Nominal.Efficiencies];
        var plant = new Plant(unit, truth);
        var window = TimeSpan.FromSeconds(WindowSeconds);
        var reusing = new DynamicEfficiencyTracker(unit, window, horizon);
        var plain = new DynamicEfficiencyTracker(unit, window, horizon) { ReuseRuns = false };
        var random = new Random(47);
        TrackerWindow first = plant.Window(WindowSeconds, random);
        reusing.AddSteady(first, truth);
        plain.AddSteady(first, truth);
        plant.Inputs.Feed = new MaterialStream(1200, new Ternary(0.25, 0.75, 0));
        double worstValue = 0, worstSigma = 0, worstChi = 0;
        int fits = 0;
        for (int w = 1; w <= 20; w++)
        {
            if (w == 6)
            {
                plant.Inputs.Efficiencies[1] = 0.65;
            }

            if (w == 14)
            {
                plant.Inputs.TemperatureKelvin = 300.15;
            }

            TrackerWindow next = plant.Window(WindowSeconds, random);
            if (w is 10 or 11)
            {
                reusing.AddSteady(next, plain.Efficiencies.ToArray());
                plain.AddSteady(next, plain.Efficiencies.ToArray());
                continue;
            }

            DynamicFit? a = reusing.Add(next), b = plain.Add(next);
            Assert.Equal(b is null, a is null);
            if (a is null || b is null)
            {
                continue;
            }

            fits++;
            Assert.Equal(b.DegreesOfFreedom, a.DegreesOfFreedom);
            worstChi = Math.Max(worstChi, Math.Abs(a.ChiSquare - b.ChiSquare) / Math.Max(b.ChiSquare, 1));
            for (int k = 0; k < stages; k++)
            {
                EstimatedValue ea = a.Efficiencies[k]!.Value, eb = b.Efficiencies[k]!.Value;
                worstValue = Math.Max(worstValue, Math.Abs(ea.Value - eb.Value));
                worstSigma = Math.Max(worstSigma, Math.Abs(ea.Sigma - eb.Sigma) / eb.Sigma);
            }
        }

        output.WriteLine($"{fits} fits: largest difference {worstValue:G3} in an efficiency, {worstSigma:G3} relative in a sigma, {worstChi:G3} in chi-square");
        Assert.Equal(18, fits);
        Assert.True(worstValue <= 1e-10, $"efficiencies differ by {worstValue:G3}");
        Assert.True(worstSigma <= 1e-9, $"sigmas differ by {worstSigma:G3} relative");
        Assert.True(worstChi <= 1e-9, $"chi-squares differ by {worstChi:G3} relative");
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
