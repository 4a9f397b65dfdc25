namespace Tieflow.Core.Plant;

/// <summary>
/// An instrument's engineering unit and its affine map to the base unit of its quantity: base = reading * <see cref="Factor"/> + <see cref="Offset"/>.
/// Base units: kg/h (mass basis) or kmol/h (mole basis) for flows, fractions (0 to 1) for compositions, kelvin for temperatures.
/// A standard deviation or a resolution converts with the factor alone.
/// </summary>
/// <param name="Name">The unit as written in the plant file, for example <c>t/h</c>, <c>percent</c>, <c>degC</c>.</param>
/// <param name="Factor">Base units per engineering unit (positive).</param>
/// <param name="Offset">Base value of an engineering reading of zero (273.15 for degC, otherwise 0).</param>
public sealed record EngineeringUnit(string Name, double Factor, double Offset)
{
    /// <summary>A reading in the engineering unit, in the base unit.</summary>
    /// <param name="reading">The reading.</param>
    public double ToBase(double reading) => (reading * Factor) + Offset;

    /// <summary>A base-unit value in the engineering unit.</summary>
    /// <param name="value">The value in the base unit.</param>
    public double FromBase(double value) => (value - Offset) / Factor;

    /// <summary>A difference (a standard deviation, a bias, a resolution) in the engineering unit, in the base unit.</summary>
    /// <param name="difference">The difference in the engineering unit.</param>
    public double DifferenceToBase(double difference) => difference * Factor;

    /// <summary>A difference in the base unit, in the engineering unit.</summary>
    /// <param name="difference">The difference in the base unit.</param>
    public double DifferenceFromBase(double difference) => difference / Factor;
}
