namespace Tieflow.Core.Equilibrium;

/// <summary>The largest solute fractions at either end of a tie line that a model can give.</summary>
/// <param name="Raffinate">Largest raffinate solute fraction.</param>
/// <param name="Extract">Largest extract solute fraction.</param>
public readonly record struct SoluteLimits(double Raffinate, double Extract);
