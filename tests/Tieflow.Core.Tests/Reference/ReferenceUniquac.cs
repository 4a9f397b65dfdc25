using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Core.Tests.Reference;

/// <summary>
/// UNIQUAC parameters of two published examples. Interaction energies a_ij in kelvin with tau_ij = exp(-a_ij / T).
/// </summary>
internal static class ReferenceUniquac
{
    /// <summary>
    /// Water - ethanol - benzene at 25 C: Gmehling, Kleiber, Kolbe and Rarey, Chemical Thermodynamics for Process
    /// Simulation, 2nd ed., Wiley (2019), Example 5.19, as reproduced in the documentation of the open-source thermo
    /// library (C. Bell). r, q: water 0.92, 1.4; ethanol 2.1055, 1.972; benzene 3.1878, 2.4. Delta u_ij (K), rows and
    /// columns water, ethanol, benzene: [0, 526.02, 309.64], [-318.06, 0, -91.532], [1325.1, 302.57, 0].
    /// Roles: solute ethanol, diluent water, solvent benzene.
    /// </summary>
    public static UniquacModel WaterEthanolBenzene(CompositionBasis basis = CompositionBasis.Mole) => new(
        new TernarySystem(
            [
                new Component("ethanol", ComponentRole.Solute, 46.069),
                new Component("water", ComponentRole.Diluent, 18.015),
                new Component("benzene", ComponentRole.Solvent, 78.114),
            ],
            basis),
        [new UniquacComponent(2.1055, 1.972), new UniquacComponent(0.92, 1.4), new UniquacComponent(3.1878, 2.4)],
        [
            new UniquacPair(1, 0, 526.02, -318.06, InteractionUnits.Kelvin),
            new UniquacPair(1, 2, 309.64, 1325.1, InteractionUnits.Kelvin),
            new UniquacPair(0, 2, -91.532, 302.57, InteractionUnits.Kelvin),
        ],
        new TemperatureRange(288.15, 308.15));

    /// <summary>
    /// Acetonitrile - benzene - n-heptane at 45 C: Poling, Prausnitz and O'Connell, The Properties of Gases and
    /// Liquids, 5th ed., McGraw-Hill (2000), problem 8.32, as reproduced in the documentation of the open-source thermo
    /// library (C. Bell). r, q: acetonitrile 1.87, 1.72; benzene 3.19, 2.4; heptane 5.17, 4.4. a_ij (K), rows and columns
    /// acetonitrile, benzene, heptane: [0, 60.28, 23.71], [89.57, 0, -135.9], [545.8, 245.4, 0].
    /// Roles: solute benzene, diluent heptane, solvent acetonitrile.
    /// </summary>
    public static UniquacModel AcetonitrileBenzeneHeptane() => new(
        new TernarySystem(
            [
                new Component("benzene", ComponentRole.Solute, 78.114),
                new Component("n-heptane", ComponentRole.Diluent, 100.205),
                new Component("acetonitrile", ComponentRole.Solvent, 41.053),
            ],
            CompositionBasis.Mole),
        [new UniquacComponent(3.19, 2.4), new UniquacComponent(5.17, 4.4), new UniquacComponent(1.87, 1.72)],
        [
            new UniquacPair(2, 0, 60.28, 89.57, InteractionUnits.Kelvin),
            new UniquacPair(2, 1, 23.71, 545.8, InteractionUnits.Kelvin),
            new UniquacPair(0, 1, -135.9, 245.4, InteractionUnits.Kelvin),
        ],
        new TemperatureRange(308.15, 328.15));
}
