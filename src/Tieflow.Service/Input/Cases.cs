using Tieflow.Core.Chemistry;

namespace Tieflow.Service.Input;

/// <summary>A split case: inlets mixed at a temperature (kelvin) and split at equilibrium.</summary>
internal sealed record SplitCase(string Path, SystemFile System, double TemperatureKelvin, IReadOnlyList<MaterialStream> Inlets);

/// <summary>
/// A cascade case. Flows on the system's basis. <see cref="Stages"/> is 0 only in a design case that finds stages;
/// <see cref="Efficiencies"/> then holds one value used for every stage.
/// </summary>
internal sealed record CascadeCase(
    string Path,
    SystemFile System,
    double TemperatureKelvin,
    CascadeKind Arrangement,
    int Stages,
    MaterialStream Feed,
    MaterialStream Solvent,
    IReadOnlyList<double> Efficiencies);

/// <summary>How the solvent meets the feed.</summary>
internal enum CascadeKind
{
    CounterCurrent,
    CrossCurrent,
}

/// <summary>What a design case asks for.</summary>
internal enum DesignGoal
{
    Stages,
    Solvent,
    MinimumSolvent,
}

/// <summary>A design target: the solute fraction of the final raffinate, or the recovery of the feed's solute into the extract.</summary>
internal sealed record DesignTargetSpec(double? RaffinateFraction, double? Recovery);

/// <summary>A design case: a cascade (solvent flow or stage count possibly unknown) and what to find.</summary>
internal sealed record DesignCase(CascadeCase Cascade, DesignGoal Find, DesignTargetSpec Target);
