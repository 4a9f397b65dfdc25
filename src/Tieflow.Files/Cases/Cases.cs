using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Files;

/// <summary>A split case: inlets mixed at a temperature (kelvin) and split at equilibrium.</summary>
public sealed record SplitCase(string Path, SystemFile System, double TemperatureKelvin, IReadOnlyList<MaterialStream> Inlets);

/// <summary>
/// A cascade case. Flows on the system's basis. <see cref="Stages"/> is 0 only in a design case that finds stages;
/// <see cref="Efficiencies"/> then holds one value used for every stage.
/// </summary>
public sealed record CascadeCase(
    string Path,
    SystemFile System,
    double TemperatureKelvin,
    CascadeArrangement Arrangement,
    int Stages,
    MaterialStream Feed,
    MaterialStream Solvent,
    IReadOnlyList<double> Efficiencies)
{
    /// <summary>
    /// Cross-current only: the fresh solvent flow of each stage, stage 1 first, when the case gives a list
    /// (<c>"solvent": { "flow": [150, 120, 100], ... }</c>); <see cref="Solvent"/> then carries the first flow. Null
    /// when one flow feeds every stage.
    /// </summary>
    public IReadOnlyList<double>? SolventFlows { get; init; }
}

/// <summary>What a design case asks for.</summary>
public enum DesignGoal
{
    Stages,
    Solvent,
    MinimumSolvent,
}

/// <summary>A design case: a cascade (solvent flow or stage count possibly unknown) and what to find.</summary>
public sealed record DesignCase(CascadeCase Cascade, DesignGoal Find, DesignTarget Target);
