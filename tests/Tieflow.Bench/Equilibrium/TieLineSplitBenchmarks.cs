using BenchmarkDotNet.Attributes;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;

namespace Tieflow.Bench.Equilibrium;

/// <summary>Splits with the tie-line table model (trichloroethane table); target at least 1,000,000 per second.</summary>
[MemoryDiagnoser]
public class TieLineSplitBenchmarks
{
    private const int Points = 1000;
    private readonly Ternary[] _points = new Ternary[Points];
    private TieLineTableModel _model = null!;

    [GlobalSetup]
    public void Setup()
    {
        var system = new TernarySystem(
            [
                new Component("acetone", ComponentRole.Solute, 58.08),
                new Component("water", ComponentRole.Diluent, 18.015),
                new Component("trichloroethane", ComponentRole.Solvent, 133.4),
            ],
            CompositionBasis.Mass);
        TieLine[] lines =
        [
            new(new(0.0596, 0.9352, 0.0052), new(0.0875, 0.0032, 0.9093)),
            new(new(0.1, 0.894, 0.006), new(0.15, 0.006, 0.844)),
            new(new(0.1397, 0.8535, 0.0068), new(0.2078, 0.009, 0.7832)),
            new(new(0.1905, 0.8016, 0.0079), new(0.2766, 0.0133, 0.7101)),
            new(new(0.2763, 0.7133, 0.0104), new(0.3939, 0.024, 0.5821)),
            new(new(0.3573, 0.6267, 0.016), new(0.4821, 0.0426, 0.4753)),
            new(new(0.4605, 0.502, 0.0375), new(0.574, 0.089, 0.337)),
        ];
        _model = new TieLineTableModel(system, 298.15, lines);
        var random = new Random(3);
        for (int i = 0; i < Points; i++)
        {
            TieLine t = _model.TieLineFromRaffinate(random.NextDouble() * 0.55, 298.15);
            double beta = random.NextDouble();
            _points[i] = ((1 - beta) * t.Raffinate) + (beta * t.Extract);
        }
    }

    /// <summary>1000 splits of points spread over the two-phase region.</summary>
    [Benchmark(OperationsPerInvoke = Points)]
    public double Split()
    {
        double sum = 0;
        foreach (Ternary z in _points)
        {
            sum += _model.Split(z, 298.15).ExtractFraction;
        }

        return sum;
    }
}
