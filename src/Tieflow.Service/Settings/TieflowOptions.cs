namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow</c>: the plant file and which of its units this instance watches.</summary>
internal sealed class TieflowOptions
{
    /// <summary>The section's name in the configuration.</summary>
    public const string Section = "Tieflow";

    /// <summary><c>Tieflow:Plant</c>: the plant file. Optional for the simulator source (then the scenario's plant).</summary>
    public string? Plant { get; set; }

    /// <summary><c>Tieflow:Units</c>: ids of the units to watch; every unit of the plant when absent.</summary>
    public List<string> Units { get; set; } = [];
}
