using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using UnitsNet;
using UnitsNet.Units;

namespace Tieflow.Files;

/// <summary>
/// The engineering units a plant file may give, by quantity, and their affine maps to Tieflow's base units (kg/h or
/// kmol/h, fractions, kelvin). The conversion factors come from UnitsNet, so that no factor is typed by hand here.
/// </summary>
public static class EngineeringUnits
{
    /// <summary>Flow units on a mass basis.</summary>
    public static readonly IReadOnlyList<string> MassFlowUnits = ["kg/h", "t/h", "kg/s"];

    /// <summary>Flow units on a mole basis.</summary>
    public static readonly IReadOnlyList<string> MoleFlowUnits = ["kmol/h"];

    /// <summary>Composition units.</summary>
    public static readonly IReadOnlyList<string> FractionUnits = ["fraction", "percent", "ppm"];

    /// <summary>Temperature units.</summary>
    public static readonly IReadOnlyList<string> TemperatureUnits = ["K", "degC"];

    /// <summary>The units allowed for a quantity on a basis.</summary>
    /// <param name="quantity">What is measured.</param>
    /// <param name="basis">The system's basis.</param>
    public static IReadOnlyList<string> Allowed(InstrumentQuantity quantity, CompositionBasis basis) => quantity switch
    {
        InstrumentQuantity.Flow => basis == CompositionBasis.Mass ? MassFlowUnits : MoleFlowUnits,
        InstrumentQuantity.Fraction => FractionUnits,
        _ => TemperatureUnits,
    };

    /// <summary>The engineering unit of a name, or null when the name is not a unit of the quantity on the basis.</summary>
    /// <param name="name">The unit as written.</param>
    /// <param name="quantity">What is measured.</param>
    /// <param name="basis">The system's basis.</param>
    public static EngineeringUnit? Find(string name, InstrumentQuantity quantity, CompositionBasis basis)
    {
        if (!Allowed(quantity, basis).Contains(name))
        {
            return null;
        }

        Func<double, double> toBase = name switch
        {
            "kg/h" => v => MassFlow.From(v, MassFlowUnit.KilogramPerHour).As(MassFlowUnit.KilogramPerHour),
            "t/h" => v => MassFlow.From(v, MassFlowUnit.TonnePerHour).As(MassFlowUnit.KilogramPerHour),
            "kg/s" => v => MassFlow.From(v, MassFlowUnit.KilogramPerSecond).As(MassFlowUnit.KilogramPerHour),
            "kmol/h" => v => MolarFlow.From(v, MolarFlowUnit.KilomolePerHour).As(MolarFlowUnit.KilomolePerHour),
            "fraction" => v => Ratio.From(v, RatioUnit.DecimalFraction).As(RatioUnit.DecimalFraction),
            "percent" => v => Ratio.From(v, RatioUnit.Percent).As(RatioUnit.DecimalFraction),
            "ppm" => v => Ratio.From(v, RatioUnit.PartPerMillion).As(RatioUnit.DecimalFraction),
            "K" => v => Temperature.From(v, TemperatureUnit.Kelvin).As(TemperatureUnit.Kelvin),
            _ => v => Temperature.From(v, TemperatureUnit.DegreeCelsius).As(TemperatureUnit.Kelvin),
        };
        double offset = toBase(0);
        return new EngineeringUnit(name, toBase(1) - offset, offset);
    }
}
