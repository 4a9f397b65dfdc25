using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// Outcome of a tangent-plane-distance stability test (Michelsen, Fluid Phase Equilib. 9, 1, 1982) of a liquid
/// mixture: the mixture is stable as one phase when no trial phase has a negative tangent plane distance.
/// </summary>
/// <param name="IsStable">True when every trial phase converged to a non-negative distance (one liquid phase).</param>
/// <param name="TangentPlaneDistance">The smallest modified tangent plane distance found (dimensionless, per mole of
/// trial phase; negative means unstable).</param>
/// <param name="TrialPhase">Composition of the trial phase with that distance, on the system's basis (the overall
/// composition itself when every trial fell back to it).</param>
/// <param name="Iterations">Substitution iterations used over all trial phases.</param>
public sealed record StabilityTestResult(bool IsStable, double TangentPlaneDistance, Ternary TrialPhase, int Iterations);
