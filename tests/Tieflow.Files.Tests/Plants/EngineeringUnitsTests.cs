using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using UnitsNet;

namespace Tieflow.Files.Tests.Plants;

/// <summary>
/// The affine maps of the engineering units, checked twice: against UnitsNet's own conversions (the library the reader
/// uses, through its quantity types rather than through <see cref="EngineeringUnits"/>) and against the definitions of
/// the SI (BIPM, The International System of Units, SI Brochure, 9th edition, 2019).
/// </summary>
public sealed class EngineeringUnitsTests
{
    [Theory]
    [InlineData("kg/h", InstrumentQuantity.Flow, CompositionBasis.Mass, 1.0, 0.0)]         // identity
    [InlineData("t/h", InstrumentQuantity.Flow, CompositionBasis.Mass, 1000.0, 0.0)]       // 1 t = 1000 kg (SI Brochure 2019, Table 8)
    [InlineData("kg/s", InstrumentQuantity.Flow, CompositionBasis.Mass, 3600.0, 0.0)]      // 1 h = 3600 s (SI Brochure 2019, Table 8)
    [InlineData("kmol/h", InstrumentQuantity.Flow, CompositionBasis.Mole, 1.0, 0.0)]       // identity
    [InlineData("fraction", InstrumentQuantity.Fraction, CompositionBasis.Mass, 1.0, 0.0)] // identity
    [InlineData("percent", InstrumentQuantity.Fraction, CompositionBasis.Mole, 0.01, 0.0)] // % = 0.01 (SI Brochure 2019, section 5.4.7)
    [InlineData("ppm", InstrumentQuantity.Fraction, CompositionBasis.Mass, 1e-6, 0.0)]     // 1 ppm = 1e-6 (common practice, no source)
    [InlineData("K", InstrumentQuantity.Temperature, CompositionBasis.Mass, 1.0, 0.0)]     // identity
    [InlineData("degC", InstrumentQuantity.Temperature, CompositionBasis.Mass, 1.0, 273.15)] // T/K = t/degC + 273.15 (SI Brochure 2019, section 2.3.1)
    public void Find_FactorAndOffset_MatchTheSiDefinitions(string name, InstrumentQuantity quantity, CompositionBasis basis, double factor, double offset)
    {
        EngineeringUnit unit = EngineeringUnits.Find(name, quantity, basis)!;

        Assert.Equal(name, unit.Name);
        Assert.Equal(factor, unit.Factor, factor * 1e-12);
        Assert.Equal(offset, unit.Offset, 1e-9);
    }

    [Fact]
    public void ToBase_MatchesUnitsNetConversions()
    {
        const double v = 2.75;
        Assert.Equal(MassFlow.FromTonnesPerHour(v).KilogramsPerHour, Unit("t/h").ToBase(v), 1e-9);
        Assert.Equal(MassFlow.FromKilogramsPerSecond(v).KilogramsPerHour, Unit("kg/s").ToBase(v), 1e-9);
        Assert.Equal(MassFlow.FromKilogramsPerHour(v).KilogramsPerHour, Unit("kg/h").ToBase(v), 1e-12);
        Assert.Equal(MolarFlow.FromKilomolesPerHour(v).KilomolesPerHour, Unit("kmol/h", InstrumentQuantity.Flow, CompositionBasis.Mole).ToBase(v), 1e-12);
        Assert.Equal(Ratio.FromPercent(v).DecimalFractions, Unit("percent", InstrumentQuantity.Fraction).ToBase(v), 1e-15);
        Assert.Equal(Ratio.FromPartsPerMillion(v).DecimalFractions, Unit("ppm", InstrumentQuantity.Fraction).ToBase(v), 1e-18);
        Assert.Equal(Temperature.FromDegreesCelsius(v).Kelvins, Unit("degC", InstrumentQuantity.Temperature).ToBase(v), 1e-9);
        Assert.Equal(Temperature.FromKelvins(v).Kelvins, Unit("K", InstrumentQuantity.Temperature).ToBase(v), 1e-12);
    }

    [Fact]
    public void Differences_UseTheFactorOnly()
    {
        // A standard deviation of 0.2 degC is one of 0.2 K: a temperature difference has no offset (UnitsNet's TemperatureDelta agrees).
        EngineeringUnit degC = Unit("degC", InstrumentQuantity.Temperature);
        Assert.Equal(TemperatureDelta.FromDegreesCelsius(0.2).Kelvins, degC.DifferenceToBase(0.2), 1e-12);
        Assert.Equal(0.2, degC.DifferenceToBase(0.2), 1e-12);
        Assert.Equal(0.2, degC.DifferenceFromBase(0.2), 1e-12);

        // A sigma of 0.008 t/h is 8 kg/h, and a range [0, 2.5] t/h is [0, 2500] kg/h (1 t = 1000 kg, SI Brochure 2019, Table 8).
        EngineeringUnit th = Unit("t/h");
        Assert.Equal(8.0, th.DifferenceToBase(0.008), 1e-9);
        Assert.Equal(2500.0, th.ToBase(2.5), 1e-9);

        // Values round-trip.
        Assert.Equal(25.0, degC.FromBase(degC.ToBase(25.0)), 1e-9);
        Assert.Equal(1.7, th.FromBase(th.ToBase(1.7)), 1e-12);
    }

    [Theory]
    [InlineData("kg/h", InstrumentQuantity.Flow, CompositionBasis.Mole)]     // a mass flow on a mole basis
    [InlineData("kmol/h", InstrumentQuantity.Flow, CompositionBasis.Mass)]   // a molar flow on a mass basis
    [InlineData("percent", InstrumentQuantity.Flow, CompositionBasis.Mass)]  // a fraction unit for a flow
    [InlineData("degC", InstrumentQuantity.Fraction, CompositionBasis.Mass)] // a temperature unit for a fraction
    [InlineData("degF", InstrumentQuantity.Temperature, CompositionBasis.Mass)]
    [InlineData("KG/H", InstrumentQuantity.Flow, CompositionBasis.Mass)]     // names are case-sensitive
    public void Find_WrongUnitForQuantityOrBasis_IsNull(string name, InstrumentQuantity quantity, CompositionBasis basis)
    {
        Assert.Null(EngineeringUnits.Find(name, quantity, basis));
    }

    private static EngineeringUnit Unit(string name, InstrumentQuantity quantity = InstrumentQuantity.Flow, CompositionBasis basis = CompositionBasis.Mass) =>
        EngineeringUnits.Find(name, quantity, basis)!;
}
