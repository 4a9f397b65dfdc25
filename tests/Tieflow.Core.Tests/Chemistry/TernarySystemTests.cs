using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Tests.Chemistry;

public sealed class TernarySystemTests
{
    private static TernarySystem AcetoneWaterTce() => new(
        [
            new Component("acetone", ComponentRole.Solute, 58.08),
            new Component("water", ComponentRole.Diluent, 18.015),
            new Component("trichloroethane", ComponentRole.Solvent, 133.4),
        ],
        CompositionBasis.Mass);

    [Fact]
    public void MassToMole_RoundTrip_ReturnsSameFractions()
    {
        TernarySystem system = AcetoneWaterTce();
        var w = new Ternary(0.2763, 0.7133, 0.0104);
        Ternary back = system.MoleToMass(system.MassToMole(w));
        Assert.True(Ternary.MaxDifference(w, back) < 1e-14);
    }

    [Fact]
    public void MassToMole_EqualMasses_GivesInverseMolarMassProportions()
    {
        // 1 kg of each: moles are 1/M (definition of molar mass).
        TernarySystem system = AcetoneWaterTce();
        Ternary x = system.MassToMole(new Ternary(1.0 / 3, 1.0 / 3, 1.0 / 3));
        double n = (1 / 58.08) + (1 / 18.015) + (1 / 133.4);
        Assert.Equal(1 / 58.08 / n, x.Solute, 12);
        Assert.Equal(1 / 18.015 / n, x.Diluent, 12);
    }

    [Fact]
    public void Convert_MassStreamToMoleAndBack_KeepsEachComponentAmount()
    {
        TernarySystem system = AcetoneWaterTce();
        var mass = new MaterialStream(200, new Ternary(0.3, 0.7, 0));
        MaterialStream mole = system.Convert(mass, CompositionBasis.Mass, CompositionBasis.Mole);
        Assert.Equal((60 / 58.08) + (140 / 18.015), mole.Flow, 10);
        MaterialStream back = system.Convert(mole, CompositionBasis.Mole, CompositionBasis.Mass);
        Assert.Equal(200, back.Flow, 10);
        Assert.True(Ternary.MaxDifference(mass.Composition, back.Composition) < 1e-14);
    }

    [Fact]
    public void Constructor_TwoSolutes_Throws()
    {
        Assert.Throws<ArgumentException>(() => new TernarySystem(
            [
                new Component("a", ComponentRole.Solute, 58),
                new Component("b", ComponentRole.Solute, 18),
                new Component("c", ComponentRole.Solvent, 100),
            ],
            CompositionBasis.Mass));
    }

    [Theory]
    [InlineData(CompositionBasis.Mass, "kg/h")]
    [InlineData(CompositionBasis.Mole, "kmol/h")]
    public void FlowUnit_FollowsTheBasis(CompositionBasis basis, string unit)
    {
        Assert.Equal(unit, basis.FlowUnit());
        var system = new TernarySystem(
            [
                new Component("a", ComponentRole.Solute, 50),
                new Component("b", ComponentRole.Diluent, 18),
                new Component("c", ComponentRole.Solvent, 100),
            ],
            basis);
        Assert.Equal(unit, system.FlowUnit);
    }
}
