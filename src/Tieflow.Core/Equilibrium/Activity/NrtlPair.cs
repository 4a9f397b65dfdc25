namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// NRTL binary parameters of components <paramref name="I"/> and <paramref name="J"/> (indices in role order:
/// 0 solute, 1 diluent, 2 solvent): tau_ij = aij + gij / T (kelvin) or aij + gij / (R T) (energy units), and the
/// same with ji; G_ij = exp(-alpha tau_ij), alpha shared by both directions.
/// </summary>
/// <param name="I">Index of component i.</param>
/// <param name="J">Index of component j, different from i.</param>
/// <param name="Alpha">Non-randomness parameter, above zero (typically 0.2 to 0.47).</param>
/// <param name="Aij">Dimensionless part of tau_ij.</param>
/// <param name="Aji">Dimensionless part of tau_ji.</param>
/// <param name="Gij">Temperature-dependent part of tau_ij, in <paramref name="Units"/>.</param>
/// <param name="Gji">Temperature-dependent part of tau_ji, in <paramref name="Units"/>.</param>
/// <param name="Units">Units of <paramref name="Gij"/> and <paramref name="Gji"/>.</param>
public sealed record NrtlPair(int I, int J, double Alpha, double Aij, double Aji, double Gij, double Gji, InteractionUnits Units);
