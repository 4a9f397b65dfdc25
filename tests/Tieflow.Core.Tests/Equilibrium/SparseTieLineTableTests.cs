using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>Tables too sparse to interpolate safely: the split never leaves the triangle, and the table says so.</summary>
public sealed class SparseTieLineTableTests
{
    private static readonly TieLine[] Published = ReferenceTables.TrichloroethaneAcetoneWater25C;

    public static TheoryData<int> Tables() => [0, 1, 2];

    private static TieLine[] Table(int k) => k switch
    {
        // Rows 1 and 7 of the published table (Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817, 1946), and two
        // invented tables with a corner tie line (demo data only).
        0 => [Published[0], Published[6]],
        1 => [new TieLine(new Ternary(0.1, 0.9, 0), new Ternary(0.2, 0, 0.8)), new TieLine(new Ternary(0.3, 0.65, 0.05), new Ternary(0.4, 0.1, 0.5))],
        _ => [new TieLine(new Ternary(0, 1, 0), new Ternary(0, 0, 1)), new TieLine(new Ternary(0.3, 0.65, 0.05), new Ternary(0.4, 0.1, 0.5))],
    };

    [Theory]
    [MemberData(nameof(Tables))]
    public void Split_TwoRowTable_StaysInTheTriangleAndBalances(int k)
    {
        var model = new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, Table(k));
        for (int i = 1; i < 50; i++)
        {
            for (int j = 1; i + j < 50; j++)
            {
                var z = new Ternary(i / 50.0, 1 - ((i + j) / 50.0), j / 50.0);
                PhaseSplit split = model.Split(z, 298.15);
                if (!split.IsTwoPhase)
                {
                    continue;
                }

                foreach (Ternary phase in new[] { split.Raffinate, split.Extract })
                {
                    Assert.True(phase.Solute >= 0 && phase.Diluent >= 0 && phase.Solvent >= 0, $"{z}: {phase}");
                    Assert.Equal(1, phase.Sum, 1e-12);
                }

                Assert.True(ActivityAssertions.BalanceResidual(split, z) < 1e-9, $"{z}");
                Assert.False(split.TieLine.Selectivity < 0, $"{z}: selectivity {split.TieLine.Selectivity}");
            }
        }
    }

    [Fact]
    public void SparseTableAdvice_TwoRows_SaysSo_ThePublishedTableDoesNot()
    {
        Assert.NotEmpty(new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, Table(0)).SparseTableAdvice());
        Assert.Contains(new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, Table(0)).SparseTableAdvice(), a => a.Contains("leave the triangle"));
        Assert.Empty(new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, Published).SparseTableAdvice());
    }
}
