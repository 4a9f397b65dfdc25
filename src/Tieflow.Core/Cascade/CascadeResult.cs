using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Cascade;

/// <summary>A solved cascade. Flows and fractions are on the system's basis (kg/h and mass fractions, or kmol/h and mole fractions).</summary>
/// <param name="Arrangement">Counter-current or cross-current.</param>
/// <param name="Status">Converged, or the iteration limit was reached (only from the Try methods).</param>
/// <param name="Stages">The stages, stage 1 first.</param>
/// <param name="Raffinate">Final raffinate (leaving stage N).</param>
/// <param name="Extract">Extract product: leaving stage 1 (counter-current) or the combined extracts (cross-current).</param>
/// <param name="Recovery">Fraction of the feed's solute that does not leave in the final raffinate, 1 - (raffinate solute / feed solute); 0 for a solute-free feed. With a solute-free solvent this is the fraction of the feed's solute leaving in the extract.</param>
/// <param name="Iterations">Iterations of the cascade solver (Newton steps and stage sweeps; stage solves for cross-current).</param>
/// <param name="BalanceResidual">Largest component-balance residual over all stages, relative to the total inflow.</param>
public sealed record CascadeResult(
    CascadeArrangement Arrangement,
    CascadeStatus Status,
    IReadOnlyList<StageResult> Stages,
    MaterialStream Raffinate,
    MaterialStream Extract,
    double Recovery,
    int Iterations,
    double BalanceResidual);
