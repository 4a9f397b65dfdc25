namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// UNIQUAC binary parameters of components <paramref name="I"/> and <paramref name="J"/> (indices in role order):
/// tau_ij = exp(-aij / T) for kelvin, or exp(-aij / (R T)) for energy units; likewise tau_ji with aji.
/// </summary>
/// <param name="I">Index of component i.</param>
/// <param name="J">Index of component j, different from i.</param>
/// <param name="Aij">Energy parameter of tau_ij, in <paramref name="Units"/>.</param>
/// <param name="Aji">Energy parameter of tau_ji, in <paramref name="Units"/>.</param>
/// <param name="Units">Units of the parameters.</param>
public sealed record UniquacPair(int I, int J, double Aij, double Aji, InteractionUnits Units);
