using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium.Distribution;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>Systems and streams shared by the cascade tests.</summary>
internal static class TestSystems
{
    public const double Temperature = 298.15;

    public static TernarySystem Immiscible(CompositionBasis basis = CompositionBasis.Mass) => new(
        [
            new Component("solute-a", ComponentRole.Solute, 60.0),
            new Component("carrier", ComponentRole.Diluent, 18.0),
            new Component("solvent-b", ComponentRole.Solvent, 100.0),
        ],
        basis);

    public static DistributionModel ConstantK(double k, CompositionBasis basis = CompositionBasis.Mass) =>
        new(Immiscible(basis), Temperature, DistributionIsotherm.Constant(k));

    /// <summary>A stream of carrier with solute-free ratio X (solute per unit carrier).</summary>
    public static MaterialStream CarrierFeed(double carrierFlow, double ratio) =>
        new(carrierFlow * (1 + ratio), new Ternary(ratio / (1 + ratio), 1 / (1 + ratio), 0));

    /// <summary>A stream of solvent with solute-free ratio Y.</summary>
    public static MaterialStream SolventStream(double solventFlow, double ratio = 0) =>
        new(solventFlow * (1 + ratio), new Ternary(ratio / (1 + ratio), 0, 1 / (1 + ratio)));

    /// <summary>Solute-free ratio of a raffinate (solute per unit carrier).</summary>
    public static double RaffinateRatio(MaterialStream s) => s.Composition.Solute / s.Composition.Diluent;
}
