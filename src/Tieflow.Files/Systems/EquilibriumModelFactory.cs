using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Equilibrium.Distribution;
using Tieflow.Core.Equilibrium.TieLines;

namespace Tieflow.Files;

/// <summary>Builds the equilibrium model of a validated system file.</summary>
public static class EquilibriumModelFactory
{
    /// <exception cref="ArgumentException">When the model refuses the data (the message says why).</exception>
    public static IPhaseEquilibrium Create(TernarySystem system, EquilibriumSpec spec) => spec switch
    {
        TieLineSpec t => new TieLineTableModel(system, t.TemperatureKelvin, t.TieLines),
        NrtlSpec n => new NrtlModel(system, n.Pairs, n.ValidTemperatures),
        UniquacSpec u => new UniquacModel(system, u.Structure, u.Pairs, u.ValidTemperatures),
        DistributionSpec d => new DistributionModel(system, d.TemperatureKelvin ?? DistributionSpec.AnyTemperatureReferenceKelvin, d.Isotherm),
        _ => throw new ArgumentOutOfRangeException(nameof(spec), spec, "Unknown equilibrium data."),
    };

    /// <summary>The model of a system file at a case's temperature: rebuilt there when its data hold at any temperature.</summary>
    public static SystemFile AtTemperature(SystemFile file, double temperatureKelvin) =>
        file.Spec is DistributionSpec { TemperatureKelvin: null } d
            ? file with { Model = new DistributionModel(file.System, temperatureKelvin, d.Isotherm) }
            : file;

    /// <summary>Every problem of a tie-line table (crossing, inverted, out of order), with the index of the line.</summary>
    public static IEnumerable<(int Index, string Message)> FindTieLineProblems(IReadOnlyList<TieLine> lines) =>
        TieLineTableModel.FindProblems(lines).Select(p => (p.Index, p.Message));
}
