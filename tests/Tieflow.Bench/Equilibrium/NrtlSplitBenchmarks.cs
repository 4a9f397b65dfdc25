using BenchmarkDotNet.Attributes;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Bench.Equilibrium;

/// <summary>
/// NRTL splits (ethyl acetate - water - ethanol, 343 K) of points spread over the two-phase region;
/// targets: 100,000 per second warm-started, 20,000 per second from a cold start.
/// </summary>
[MemoryDiagnoser]
public class NrtlSplitBenchmarks
{
    private const int Points = 200;
    private const double T = 343.0;
    private readonly Ternary[] _points = new Ternary[Points];
    private readonly PhaseSplit[] _previous = new PhaseSplit[Points];
    private NrtlModel _model = null!;
    private NrtlModel _stabilityOnly = null!;
    private NrtlPair[] _pairs = null!;

    [GlobalSetup]
    public void Setup()
    {
        var system = new TernarySystem(
            [
                new Component("ethanol", ComponentRole.Solute, 46.069),
                new Component("water", ComponentRole.Diluent, 18.015),
                new Component("ethyl-acetate", ComponentRole.Solvent, 88.106),
            ],
            CompositionBasis.Mole);
        NrtlPair[] pairs =
        [
            new(2, 1, 0.4, 0, 0, 1335, 2510, InteractionUnits.CaloriePerMole),
            new(2, 0, 0.3, 0, 0, 301, 322, InteractionUnits.CaloriePerMole),
            new(1, 0, 0.3, 0, 0, 976, 88, InteractionUnits.CaloriePerMole),
        ];
        _pairs = pairs;
        _model = new NrtlModel(system, pairs, new TemperatureRange(298.15, 353.15));
        _stabilityOnly = new NrtlModel(system, pairs, new TemperatureRange(298.15, 353.15)) { ColdStartFromTieLines = false };
        var random = new Random(11);
        for (int i = 0; i < Points; i++)
        {
            TieLine t = _model.TieLineFromRaffinate(random.NextDouble() * 0.15, T);
            double beta = 0.05 + (0.9 * random.NextDouble());
            _points[i] = ((1 - beta) * t.Raffinate) + (beta * t.Extract);

            // The previous time step: the same point moved by about 0.002 in each fraction.
            Ternary moved = (_points[i] + new Ternary(0.002 * (random.NextDouble() - 0.5), 0.002 * (random.NextDouble() - 0.5), 0)).Normalized();
            _previous[i] = _model.Split(moved, T);
        }
    }

    /// <summary>Splits started from the answer of a nearby point.</summary>
    [Benchmark(OperationsPerInvoke = Points)]
    public double SplitWarm()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += _model.Split(_points[i], T, _previous[i]).ExtractFraction;
        }

        return sum;
    }

    /// <summary>Splits without a warm start, the tie lines of this temperature already traced (the default path).</summary>
    [Benchmark(OperationsPerInvoke = Points)]
    public double SplitCold()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += _model.Split(_points[i], T).ExtractFraction;
        }

        return sum;
    }

    /// <summary>Splits without a warm start by the stability test, substitution and Newton alone.</summary>
    [Benchmark(OperationsPerInvoke = Points)]
    public double SplitColdStabilityTest()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += _stabilityOnly.Split(_points[i], T).ExtractFraction;
        }

        return sum;
    }

    /// <summary>Tracing the tie lines of a new temperature (what the first tie-line call at a temperature costs).</summary>
    [Benchmark]
    public double TraceTieLines()
    {
        var fresh = new NrtlModel(_model.System, _pairs, _model.ValidTemperatures);
        return fresh.SoluteLimits(T).Raffinate;
    }
}
