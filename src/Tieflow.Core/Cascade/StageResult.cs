using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Cascade;

/// <summary>The streams leaving one stage.</summary>
/// <param name="Stage">Stage number, 1 at the feed end.</param>
/// <param name="Raffinate">Raffinate leaving the stage (on the raffinate branch of the envelope).</param>
/// <param name="Extract">Extract leaving the stage (on the extract branch of the envelope).</param>
/// <param name="Efficiency">Murphree raffinate efficiency of the stage, (x_in - x_out) / (x_in - x*).</param>
/// <param name="EquilibriumRaffinateSoluteFraction">x*: solute fraction of the raffinate in equilibrium with the extract leaving.</param>
public sealed record StageResult(int Stage, MaterialStream Raffinate, MaterialStream Extract, double Efficiency, double EquilibriumRaffinateSoluteFraction);
