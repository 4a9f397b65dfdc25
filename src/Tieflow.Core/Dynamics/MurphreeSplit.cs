using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Dynamics;

/// <summary>The two phases a mixer's contents leave as: both on the envelope, the raffinate at the Murphree efficiency from the entering raffinate.</summary>
/// <param name="Raffinate">Raffinate-phase fractions.</param>
/// <param name="Extract">Extract-phase fractions.</param>
/// <param name="ExtractShare">Share of the mixture that is extract phase (lever rule), in [0, 1].</param>
/// <param name="ExtractSolute">Solute fraction of the extract (the unknown solved for; the next step's start).</param>
/// <param name="EquilibriumRaffinateSolute">x*: raffinate solute fraction in equilibrium with the extract.</param>
public readonly record struct MurphreeSplit(Ternary Raffinate, Ternary Extract, double ExtractShare, double ExtractSolute, double EquilibriumRaffinateSolute);
