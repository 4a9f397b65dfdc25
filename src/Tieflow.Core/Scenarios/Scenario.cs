using Tieflow.Core.Plant;

namespace Tieflow.Core.Scenarios;

/// <summary>A simulation run: the plant, the time span, the random seed, the faults and the normal changes.</summary>
public sealed record Scenario
{
    /// <summary>The plant simulated.</summary>
    public required PlantDescription Plant { get; init; }

    /// <summary>Start of the run (UTC).</summary>
    public required DateTimeOffset Start { get; init; }

    /// <summary>Length of the run, positive.</summary>
    public required TimeSpan Duration { get; init; }

    /// <summary>Integration and sampling step, positive and not longer than the run.</summary>
    public required TimeSpan Step { get; init; }

    /// <summary>Seed of every random number of the run: the same scenario and seed give the same history.</summary>
    public required int Seed { get; init; }

    /// <summary>Injected faults.</summary>
    public IReadOnlyList<Fault> Faults { get; init; } = [];

    /// <summary>Normal operation changes.</summary>
    public IReadOnlyList<Disturbance> Disturbances { get; init; } = [];

    /// <summary>The lab's schedule; null for no lab samples.</summary>
    public LabSchedule? Lab { get; init; }

    /// <summary>End of the run (UTC).</summary>
    public DateTimeOffset End => Start + Duration;
}
