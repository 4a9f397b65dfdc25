namespace Tieflow.Core.Chemistry;

/// <summary>A chemical component of an extraction system.</summary>
/// <param name="Id">Identifier used in files and outputs (for example <c>acetone</c>).</param>
/// <param name="Role">Solute, diluent or solvent.</param>
/// <param name="MolarMassKgPerKmol">Molar mass in kg/kmol (numerically g/mol), above zero.</param>
public sealed record Component(string Id, ComponentRole Role, double MolarMassKgPerKmol);
