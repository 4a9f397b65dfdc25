using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Tests.Reference;

/// <summary>
/// Published tie-line tables copied from the project's reference folder so that tests run on a clean checkout.
/// Mass fractions in role order (solute, diluent, solvent).
/// </summary>
internal static class ReferenceTables
{
    /// <summary>
    /// Water (diluent) - acetic acid (solute) - diisopropyl ether (solvent), 20 C, tie lines 1-9.
    /// Source: Trans. AIChE 36, 601, 628 (1940), as tabulated in Geankoplis, Transport Processes and Separation
    /// Process Principles, 4th ed., Table A.3-24 (also Treybal, Mass-Transfer Operations, 3rd ed., ch. 10).
    /// Acid and water printed; ether by difference.
    /// </summary>
    public static TieLine[] IsopropylEtherAceticAcidWater20C { get; } =
    [
        Line(0.0069, 0.981, 0.0121, 0.0018, 0.005, 0.9932),
        Line(0.0141, 0.971, 0.0149, 0.0037, 0.007, 0.9893),
        Line(0.0289, 0.955, 0.0161, 0.0079, 0.008, 0.9841),
        Line(0.0642, 0.917, 0.0188, 0.0193, 0.01, 0.9707),
        Line(0.133, 0.844, 0.023, 0.0482, 0.019, 0.9328),
        Line(0.255, 0.711, 0.034, 0.114, 0.039, 0.847),
        Line(0.367, 0.589, 0.044, 0.216, 0.069, 0.715),
        Line(0.443, 0.451, 0.106, 0.311, 0.108, 0.581),
        Line(0.464, 0.371, 0.165, 0.362, 0.151, 0.487),
    ];

    /// <summary>
    /// Water (diluent) - acetone (solute) - 1,1,2-trichloroethane (solvent), 25 C, tie lines 1-7.
    /// Source: Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817 (1946), as tabulated in Treybal,
    /// Mass-Transfer Operations, 3rd ed., ch. 10. Binary ends there: water phase 0/0.9956/0.0044,
    /// solvent phase 0/0.0011/0.9989; approximate plait point 0.58/0.22/0.20 (uncertain).
    /// </summary>
    public static TieLine[] TrichloroethaneAcetoneWater25C { get; } =
    [
        Line(0.0596, 0.9352, 0.0052, 0.0875, 0.0032, 0.9093),
        Line(0.1, 0.894, 0.006, 0.15, 0.006, 0.844),
        Line(0.1397, 0.8535, 0.0068, 0.2078, 0.009, 0.7832),
        Line(0.1905, 0.8016, 0.0079, 0.2766, 0.0133, 0.7101),
        Line(0.2763, 0.7133, 0.0104, 0.3939, 0.024, 0.5821),
        Line(0.3573, 0.6267, 0.016, 0.4821, 0.0426, 0.4753),
        Line(0.4605, 0.502, 0.0375, 0.574, 0.089, 0.337),
    ];

    public static TernarySystem IsopropylEtherSystem { get; } = new(
        [
            new Component("acetic-acid", ComponentRole.Solute, 60.052),
            new Component("water", ComponentRole.Diluent, 18.015),
            new Component("isopropyl-ether", ComponentRole.Solvent, 102.175),
        ],
        CompositionBasis.Mass);

    public static TernarySystem TrichloroethaneSystem { get; } = new(
        [
            new Component("acetone", ComponentRole.Solute, 58.08),
            new Component("water", ComponentRole.Diluent, 18.015),
            new Component("trichloroethane", ComponentRole.Solvent, 133.4),
        ],
        CompositionBasis.Mass);

    private static TieLine Line(double rs, double rd, double rv, double es, double ed, double ev) =>
        new(new Ternary(rs, rd, rv), new Ternary(es, ed, ev));
}
