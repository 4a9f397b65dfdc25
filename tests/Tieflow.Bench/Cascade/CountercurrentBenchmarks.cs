using BenchmarkDotNet.Attributes;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Equilibrium.TieLines;

namespace Tieflow.Bench.Cascade;

/// <summary>
/// Six-stage counter-current cascades. Target: at least 2,000 NRTL solves per second with a solver that is reused
/// (its envelope table is built at the first solve); the cold variant builds a new solver every time.
/// NRTL: ethyl acetate - water - ethanol at 343 K, parameters credited to Renon and Prausnitz (1969) as in the
/// project's reference folder (ethyl-acetate-water-ethanol.nrtl.system.json). Tie lines: water - acetic acid -
/// diisopropyl ether at 20 C (Geankoplis, 4th ed., Table A.3-24).
/// </summary>
[MemoryDiagnoser]
public class CountercurrentBenchmarks
{
    private static readonly MaterialStream NrtlFeed = new(100, new Ternary(0.06, 0.94, 0));
    private static readonly MaterialStream NrtlSolvent = new(80, new Ternary(0, 0, 1));
    private static readonly MaterialStream TableFeed = new(200, new Ternary(0.30, 0.70, 0));
    private static readonly MaterialStream TableSolvent = new(600, new Ternary(0, 0, 1));

    private NrtlModel _nrtl = null!;
    private CascadeSolver _nrtlSolver = null!;
    private CascadeSolver _tableSolver = null!;
    private double[] _equilibrium = null!;
    private double[] _murphree = null!;

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
        _nrtl = new NrtlModel(
            system,
            [
                new NrtlPair(2, 1, 0.4, 0, 0, 1335, 2510, InteractionUnits.CaloriePerMole),
                new NrtlPair(2, 0, 0.3, 0, 0, 301, 322, InteractionUnits.CaloriePerMole),
                new NrtlPair(1, 0, 0.3, 0, 0, 976, 88, InteractionUnits.CaloriePerMole),
            ],
            new TemperatureRange(298.15, 353.15));
        _nrtlSolver = new CascadeSolver(_nrtl, 343);

        var ipe = new TernarySystem(
            [
                new Component("acetic-acid", ComponentRole.Solute, 60.052),
                new Component("water", ComponentRole.Diluent, 18.015),
                new Component("isopropyl-ether", ComponentRole.Solvent, 102.175),
            ],
            CompositionBasis.Mass);
        TieLine[] lines =
        [
            new(new(0.0069, 0.981, 0.0121), new(0.0018, 0.005, 0.9932)),
            new(new(0.0141, 0.971, 0.0149), new(0.0037, 0.007, 0.9893)),
            new(new(0.0289, 0.955, 0.0161), new(0.0079, 0.008, 0.9841)),
            new(new(0.0642, 0.917, 0.0188), new(0.0193, 0.01, 0.9707)),
            new(new(0.133, 0.844, 0.023), new(0.0482, 0.019, 0.9328)),
            new(new(0.255, 0.711, 0.034), new(0.114, 0.039, 0.847)),
            new(new(0.367, 0.589, 0.044), new(0.216, 0.069, 0.715)),
            new(new(0.443, 0.451, 0.106), new(0.311, 0.108, 0.581)),
            new(new(0.464, 0.371, 0.165), new(0.362, 0.151, 0.487)),
        ];
        _tableSolver = new CascadeSolver(new TieLineTableModel(ipe, 293.15, lines), 293.15);
        _equilibrium = [1, 1, 1, 1, 1, 1];
        _murphree = [0.9, 0.85, 0.8, 0.8, 0.85, 0.9];

        // Build the envelope table outside the measurement.
        _nrtlSolver.SolveCountercurrent(NrtlFeed, NrtlSolvent, _equilibrium);
    }

    /// <summary>Six equilibrium stages on NRTL, solver reused.</summary>
    [Benchmark]
    public double NrtlSixEquilibriumStages() => _nrtlSolver.SolveCountercurrent(NrtlFeed, NrtlSolvent, _equilibrium).Recovery;

    /// <summary>Six stages of efficiency 0.8 to 0.9 on NRTL, solver reused.</summary>
    [Benchmark]
    public double NrtlSixMurphreeStages() => _nrtlSolver.SolveCountercurrent(NrtlFeed, NrtlSolvent, _murphree).Recovery;

    /// <summary>Six equilibrium stages on NRTL with a new solver (envelope table built every time).</summary>
    [Benchmark]
    public double NrtlSixEquilibriumStagesCold() => new CascadeSolver(_nrtl, 343).SolveCountercurrent(NrtlFeed, NrtlSolvent, _equilibrium).Recovery;

    /// <summary>Six stages of efficiency 0.8 to 0.9 on the tie-line table.</summary>
    [Benchmark]
    public double TieLineTableSixMurphreeStages() => _tableSolver.SolveCountercurrent(TableFeed, TableSolvent, _murphree).Recovery;
}
