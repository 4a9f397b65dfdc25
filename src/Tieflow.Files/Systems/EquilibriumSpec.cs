using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Equilibrium.Distribution;

namespace Tieflow.Files;

/// <summary>The equilibrium data of a system file, validated, before a model is built from it.</summary>
public abstract record EquilibriumSpec(string Model);

/// <summary>Experimental tie lines at one temperature (kelvin), fractions on the file's basis.</summary>
public sealed record TieLineSpec(double TemperatureKelvin, IReadOnlyList<TieLine> TieLines) : EquilibriumSpec("tie-lines");

/// <summary>NRTL binary pairs (indices in role order) and the temperatures the parameters are meant for.</summary>
public sealed record NrtlSpec(IReadOnlyList<NrtlPair> Pairs, TemperatureRange ValidTemperatures) : EquilibriumSpec("nrtl");

/// <summary>UNIQUAC structure parameters (role order), pairs and the temperatures the parameters are meant for.</summary>
public sealed record UniquacSpec(IReadOnlyList<UniquacComponent> Structure, IReadOnlyList<UniquacPair> Pairs, TemperatureRange ValidTemperatures) : EquilibriumSpec("uniquac");

/// <summary>A distribution isotherm on solute-free ratios, measured at one temperature (kelvin), or at none: then it holds at any temperature.</summary>
public sealed record DistributionSpec(double? TemperatureKelvin, DistributionIsotherm Isotherm) : EquilibriumSpec("distribution")
{
    /// <summary>The temperature a model is built at when the file names none (it is rebuilt at a case's temperature).</summary>
    public const double AnyTemperatureReferenceKelvin = 298.15;
}
