using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Service.Input;

/// <summary>Builds the equilibrium model of a validated system file.</summary>
internal static class EquilibriumModelFactory
{
    public static IPhaseEquilibrium Create(TernarySystem system, EquilibriumSpec spec) =>
        throw new NotSupportedException($"The {spec.Model} model is not available in this build ({system.Solute.Id}).");

    public static IEnumerable<(int Index, string Message)> FindTieLineProblems(IReadOnlyList<TieLine> lines)
    {
        _ = lines;
        yield break;
    }
}
