using FsCheck.Xunit;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>Invariants of every split, over compositions anywhere in the triangle (FsCheck).</summary>
public sealed class PhaseSplitPropertyTests
{
    private static readonly TieLineTableModel Table = new(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C);
    private static readonly NrtlModel Nrtl = ReferenceNrtl.Model();

    [Property(MaxTest = 500)]
    public bool TieLineTable_Split_LiesOnItsTieLineAndClosesTheBalance(int a, int b, int c)
    {
        Ternary z = Composition(a, b, c);
        PhaseSplit split = Table.Split(z, 298.15);
        return !split.IsTwoPhase
            ? split.Raffinate == z && split.ExtractFraction == 0
            : split.ExtractFraction > 0 && split.ExtractFraction < 1
                && ActivityAssertions.BalanceResidual(split, z) < 1e-12
                && Math.Abs(split.Raffinate.Sum - 1) < 1e-12 && Math.Abs(split.Extract.Sum - 1) < 1e-12
                && split.Raffinate.Diluent > split.Extract.Diluent;
    }

    [Property(MaxTest = 150)]
    public bool Nrtl_Split_IsIsoactiveAndClosesTheBalance(int a, int b, int c)
    {
        Ternary z = Composition(a, b, c);
        PhaseSplit split = Nrtl.Split(z, 343.0);
        return !split.IsTwoPhase
            ? split.Raffinate == z
            : ActivityAssertions.BalanceResidual(split, z) < 1e-12
                && ActivityAssertions.IsoactivityResidual(Nrtl, split.TieLine, 343.0) < 1e-9
                && Ternary.MaxDifference(split.Raffinate, split.Extract) > 1e-4
                && split.Raffinate.Diluent > split.Extract.Diluent;
    }

    // A composition from three integers: parts 1 to 1000 each, normalised (no zero parts, every region reachable).
    private static Ternary Composition(int a, int b, int c) =>
        new Ternary(1 + (Math.Abs((long)a) % 1000), 1 + (Math.Abs((long)b) % 1000), 1 + (Math.Abs((long)c) % 1000)).Normalized();
}
