using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Plant;

/// <summary>A unit's design operating point. Flows and fractions on the system's basis.</summary>
/// <param name="Feed">Feed stream.</param>
/// <param name="Solvent">Fresh solvent stream (fed to every stage in a cross-current unit).</param>
/// <param name="TemperatureKelvin">Operating temperature, kelvin.</param>
/// <param name="Efficiencies">Murphree raffinate efficiency per stage, stage 1 first, each in (0, 1].</param>
public sealed record NominalOperation(MaterialStream Feed, MaterialStream Solvent, double TemperatureKelvin, IReadOnlyList<double> Efficiencies);
