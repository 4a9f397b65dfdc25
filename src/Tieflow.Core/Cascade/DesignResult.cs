namespace Tieflow.Core.Cascade;

/// <summary>The answer of a stage-count or solvent-flow design of a counter-current cascade.</summary>
/// <param name="Stages">Whole number of stages: the smallest count that meets the target.</param>
/// <param name="FractionalStages">
/// Stages counted stage by stage from the feed end with the end points fixed by the target (the classical graphical
/// construction), the last stage counted by the fraction of its solute change needed:
/// (n - 1) + (x_(n-1) - x_target) / (x_(n-1) - x_n). Equals <see cref="Stages"/> when the target is met exactly.
/// </param>
/// <param name="SolventFlow">Solvent flow, kg/h on a mass basis or kmol/h on a mole basis.</param>
/// <param name="MinimumSolventFlow">Minimum solvent flow for the target (a pinch: infinitely many stages), same unit.</param>
/// <param name="Cascade">The counter-current cascade of <see cref="Stages"/> stages at <see cref="SolventFlow"/>.</param>
public sealed record DesignResult(int Stages, double FractionalStages, double SolventFlow, double MinimumSolventFlow, CascadeResult Cascade);
