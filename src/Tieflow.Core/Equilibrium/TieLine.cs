using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium;

/// <summary>Two liquid phases in equilibrium: the diluent-rich raffinate and the solvent-rich extract.</summary>
/// <param name="Raffinate">Raffinate fractions, role order.</param>
/// <param name="Extract">Extract fractions, role order.</param>
public readonly record struct TieLine(Ternary Raffinate, Ternary Extract)
{
    /// <summary>Distribution coefficient of the solute, K = y_solute / x_solute (extract over raffinate), on the system's basis.</summary>
    public double DistributionCoefficient => Extract.Solute / Raffinate.Solute;

    /// <summary>Selectivity of the solvent, beta = (y_solute / y_diluent) / (x_solute / x_diluent).</summary>
    public double Selectivity => (Extract.Solute / Extract.Diluent) / (Raffinate.Solute / Raffinate.Diluent);
}
