using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium;

/// <summary>
/// Liquid-liquid equilibrium of a ternary system, the one interface every model implements (tie-line table,
/// NRTL, UNIQUAC, distribution isotherm). Compositions are fractions on the basis of <see cref="System"/>
/// (models that work in mole fractions convert internally); temperatures are kelvin.
/// The raffinate is the diluent-rich phase, the extract the solvent-rich phase.
/// </summary>
public interface IPhaseEquilibrium
{
    /// <summary>The components (role order) and the basis of every composition exchanged with this model.</summary>
    TernarySystem System { get; }

    /// <summary>Temperatures (kelvin) for which the model's data are meant to be used.</summary>
    TemperatureRange ValidTemperatures { get; }

    /// <summary>
    /// Splits an overall composition into raffinate and extract at equilibrium, or reports one phase.
    /// </summary>
    /// <param name="overall">Overall fractions, summing to one.</param>
    /// <param name="temperatureKelvin">Temperature in kelvin.</param>
    /// <returns>The split; <see cref="PhaseSplit.IsTwoPhase"/> is false when the mixture is one liquid phase.</returns>
    /// <exception cref="EquilibriumException">When the calculation does not converge (the message says from where).</exception>
    PhaseSplit Split(Ternary overall, double temperatureKelvin);

    /// <summary>
    /// As <see cref="Split(Ternary, double)"/>, starting from an earlier answer near this one (for example the same stage
    /// at the previous time step). Models without an iterative split ignore the start.
    /// </summary>
    PhaseSplit Split(Ternary overall, double temperatureKelvin, in PhaseSplit warmStart);

    /// <summary>The tie line whose raffinate end has this solute fraction (the extract in equilibrium with that raffinate).</summary>
    /// <exception cref="EquilibriumException">When no tie line has that raffinate solute fraction (beyond the plait point or the data).</exception>
    TieLine TieLineFromRaffinate(double raffinateSoluteFraction, double temperatureKelvin);

    /// <summary>The tie line whose extract end has this solute fraction (the raffinate in equilibrium with that extract).</summary>
    /// <exception cref="EquilibriumException">When no tie line has that extract solute fraction (beyond the plait point or the data).</exception>
    TieLine TieLineFromExtract(double extractSoluteFraction, double temperatureKelvin);

    /// <summary>
    /// Largest solute fractions the raffinate and extract ends of a tie line can have at this temperature
    /// (at the plait point, or at the last tie line of a table); the tie-line methods accept solute fractions up to these.
    /// </summary>
    SoluteLimits SoluteLimits(double temperatureKelvin);
}
