using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium;

/// <summary>
/// The answer of a phase split: two phases on a tie line and the share of the mixture in the extract,
/// or one phase (then <see cref="Raffinate"/> and <see cref="Extract"/> both equal the overall composition).
/// </summary>
/// <param name="IsTwoPhase">True when the mixture splits into two liquid phases.</param>
/// <param name="Raffinate">Raffinate (diluent-rich) fractions.</param>
/// <param name="Extract">Extract (solvent-rich) fractions.</param>
/// <param name="ExtractFraction">Share of the mixture's amount (on the system's basis) that is extract, in [0, 1]; 0 for one phase.</param>
/// <param name="Iterations">Iterations the calculation used (0 for closed-form models).</param>
public readonly record struct PhaseSplit(bool IsTwoPhase, Ternary Raffinate, Ternary Extract, double ExtractFraction, int Iterations)
{
    /// <summary>The tie line of a two-phase split.</summary>
    public TieLine TieLine => new(Raffinate, Extract);

    /// <summary>A one-phase answer.</summary>
    public static PhaseSplit OnePhase(Ternary overall, int iterations = 0) => new(false, overall, overall, 0, iterations);
}
