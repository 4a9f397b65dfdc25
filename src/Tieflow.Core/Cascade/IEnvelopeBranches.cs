using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Cascade;

/// <summary>The two branches of a phase envelope at one temperature, as the counter-current solver reads them.</summary>
internal interface IEnvelopeBranches
{
    /// <summary>Largest raffinate solute fraction.</summary>
    double RaffinateMax { get; }

    /// <summary>Largest extract solute fraction.</summary>
    double ExtractMax { get; }

    /// <summary>The raffinate-branch point with solute fraction x.</summary>
    Ternary Raffinate(double x);

    /// <summary>The tie line whose extract end has solute fraction y.</summary>
    TieLine FromExtract(double y);
}
