using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Core.Tests.Reference;

/// <summary>
/// Ethyl acetate - water - ethanol NRTL parameters copied from the project's reference folder
/// (ethyl-acetate-water-ethanol.nrtl.system.json): credited to Renon and Prausnitz (1969), Ind. Eng. Chem. Process
/// Des. Dev. 8, 413 (citation from memory), as reproduced in a public notebook; not checked against the paper.
/// Roles: solute ethanol (0), diluent water (1), solvent ethyl acetate (2). tau_ij = g_ij / (R T), g in cal/mol.
/// </summary>
internal static class ReferenceNrtl
{
    public static TernarySystem System(CompositionBasis basis = CompositionBasis.Mole) => new(
        [
            new Component("ethanol", ComponentRole.Solute, 46.069),
            new Component("water", ComponentRole.Diluent, 18.015),
            new Component("ethyl-acetate", ComponentRole.Solvent, 88.106),
        ],
        basis);

    public static NrtlPair[] Pairs { get; } =
    [
        new(2, 1, 0.4, 0, 0, 1335, 2510, InteractionUnits.CaloriePerMole),
        new(2, 0, 0.3, 0, 0, 301, 322, InteractionUnits.CaloriePerMole),
        new(1, 0, 0.3, 0, 0, 976, 88, InteractionUnits.CaloriePerMole),
    ];

    public static NrtlModel Model(CompositionBasis basis = CompositionBasis.Mole) =>
        new(System(basis), Pairs, new TemperatureRange(298.15, 353.15));
}
