namespace Tieflow.Core.Cascade;

/// <summary>The minimum solvent flow of a counter-current cascade for a target: the flow at which a pinch appears.</summary>
/// <param name="MinimumSolventFlow">Minimum solvent flow, kg/h on a mass basis or kmol/h on a mole basis.</param>
/// <param name="PinchRaffinateSoluteFraction">Raffinate solute fraction of the tie line on which the pinch lies.</param>
/// <param name="TargetRaffinateFraction">Final raffinate solute fraction at the minimum (the target, or the fraction that gives the target recovery).</param>
/// <param name="Iterations">Bisection steps on the solvent flow.</param>
public sealed record MinimumSolventResult(double MinimumSolventFlow, double PinchRaffinateSoluteFraction, double TargetRaffinateFraction, int Iterations);
