namespace Tieflow.Core.Equilibrium;

/// <summary>A closed range of temperatures in kelvin.</summary>
/// <param name="MinKelvin">Lowest temperature, kelvin.</param>
/// <param name="MaxKelvin">Highest temperature, kelvin; not below <paramref name="MinKelvin"/>.</param>
public readonly record struct TemperatureRange(double MinKelvin, double MaxKelvin)
{
    /// <summary>Whether the temperature lies in the range.</summary>
    public bool Contains(double temperatureKelvin) => temperatureKelvin >= MinKelvin && temperatureKelvin <= MaxKelvin;

    /// <summary>A range around one temperature, for data measured at a single temperature.</summary>
    public static TemperatureRange Around(double temperatureKelvin, double toleranceKelvin) =>
        new(temperatureKelvin - toleranceKelvin, temperatureKelvin + toleranceKelvin);
}
