namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// Units of the temperature-dependent part of a binary interaction parameter: kelvin (the parameter is divided by T),
/// or an energy per mole (divided by R T, with R = 8.314462618 J/(mol K) or 1.98720425864 cal/(mol K)).
/// </summary>
public enum InteractionUnits
{
    /// <summary>Parameter in kelvin: term = g / T.</summary>
    Kelvin,

    /// <summary>Parameter in J/mol: term = g / (R T).</summary>
    JoulePerMole,

    /// <summary>Parameter in cal/mol: term = g / (R T).</summary>
    CaloriePerMole,
}
