namespace Tieflow.Core.Scenarios;

/// <summary>
/// One injected fault. Times are offsets from the scenario's start. Which members are set depends on <see cref="Kind"/>:
/// stage-efficiency (<see cref="Stage"/> or every stage, <see cref="Ramp"/>, <see cref="Value"/> the new efficiency),
/// entrainment (<see cref="Stage"/>, <see cref="Value"/> the carried mass fraction, <see cref="Carried"/>),
/// solvent-loss (<see cref="Value"/> the lost fraction of the solvent flow), sensor-bias (<see cref="Tag"/>,
/// <see cref="Value"/> the bias in the tag's engineering unit), sensor-drift (<see cref="Tag"/>, <see cref="Value"/>
/// the drift per hour in the engineering unit), sensor-stuck, signal-bad and signal-frozen (<see cref="Tag"/>).
/// </summary>
public sealed record Fault
{
    /// <summary>What goes wrong.</summary>
    public required FaultKind Kind { get; init; }

    /// <summary>The unit it happens in; null when the plant has one unit.</summary>
    public string? Unit { get; init; }

    /// <summary>The stage (1-based), or null for every stage or a fault that has no stage.</summary>
    public int? Stage { get; init; }

    /// <summary>The instrument's tag, for sensor and signal faults.</summary>
    public string? Tag { get; init; }

    /// <summary>When it starts, from the scenario's start.</summary>
    public required TimeSpan Start { get; init; }

    /// <summary>When it ends, from the scenario's start; null when it lasts to the end of the run.</summary>
    public TimeSpan? End { get; init; }

    /// <summary>Time over which a stage-efficiency fault reaches its value (zero for a step).</summary>
    public TimeSpan Ramp { get; init; }

    /// <summary>The fault's magnitude (see the type's summary for its meaning per kind); 0 for kinds that have none.</summary>
    public double Value { get; init; }

    /// <summary>For entrainment: which phase is carried over.</summary>
    public EntrainedPhase Carried { get; init; } = EntrainedPhase.Raffinate;

    /// <summary>True while the fault acts, at an offset from the scenario's start.</summary>
    /// <param name="elapsed">Offset from the scenario's start.</param>
    public bool IsActive(TimeSpan elapsed) => elapsed >= Start && (End is null || elapsed < End.Value);

    /// <summary>The contract's text name of a fault kind (<c>stage-efficiency</c>, <c>sensor-bias</c>, ...).</summary>
    /// <param name="kind">The kind.</param>
    public static string KindName(FaultKind kind) => kind switch
    {
        FaultKind.StageEfficiency => "stage-efficiency",
        FaultKind.Entrainment => "entrainment",
        FaultKind.SolventLoss => "solvent-loss",
        FaultKind.SensorBias => "sensor-bias",
        FaultKind.SensorDrift => "sensor-drift",
        FaultKind.SensorStuck => "sensor-stuck",
        FaultKind.SignalBad => "signal-bad",
        FaultKind.SignalFrozen => "signal-frozen",
        _ => throw new ArgumentOutOfRangeException(nameof(kind), kind, "Unknown fault kind."),
    };
}
