namespace Tieflow.Core.Cascade;

/// <summary>The minimum solvent flow of a counter-current cascade for a target: the flow at which a pinch appears.</summary>
/// <param name="MinimumSolventFlow">Minimum solvent flow, kg/h on a mass basis or kmol/h on a mole basis.</param>
/// <param name="PinchRaffinateSoluteFraction">Raffinate solute fraction of the tie line on which the pinch lies; NaN when the limit is not a pinch but the overall balance itself (below the minimum, feed and solvent have no balance with the target raffinate, for example because they form one phase).</param>
/// <param name="TargetRaffinateFraction">Final raffinate solute fraction at the minimum (the target, or the fraction that gives the target recovery).</param>
/// <param name="Iterations">Bisection steps on the solvent flow.</param>
public sealed record MinimumSolventResult(double MinimumSolventFlow, double PinchRaffinateSoluteFraction, double TargetRaffinateFraction, int Iterations);
