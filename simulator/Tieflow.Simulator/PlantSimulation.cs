using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator;

/// <summary>
/// A simulated plant running one scenario, one step at a time: a pure model (no clock, no I/O), deterministic for a
/// scenario and its seed. Each <see cref="Step"/> sets the inputs of every unit for the current time (disturbances,
/// faults), hands every instrument's reading, the lab results reported now and, once a simulated minute, the truth
/// to the sink, and then integrates the dynamics over one step.
/// </summary>
public sealed class PlantSimulation
{
    private readonly UnitSimulation[] _units;
    private readonly double _stepSeconds;

    /// <summary>Builds the plant at the steady state of its operating point at the scenario's start.</summary>
    /// <exception cref="ArgumentException">A fault or disturbance names a unit, stage or tag the plant does not have.</exception>
    /// <exception cref="Tieflow.Core.Cascade.CascadeException">The starting operating point of a unit cannot be solved.</exception>
    public PlantSimulation(Scenario scenario)
    {
        ArgumentNullException.ThrowIfNull(scenario);
        Scenario = scenario;
        _stepSeconds = scenario.Step.TotalSeconds;
        if (!(_stepSeconds > 0) || scenario.Duration < scenario.Step)
        {
            throw new ArgumentException($"the step ({scenario.Step}) must be positive and not longer than the run ({scenario.Duration})", nameof(scenario));
        }

        StepCount = (long)Math.Floor((scenario.Duration.TotalSeconds / _stepSeconds) + 1e-9);
        IReadOnlyList<UnitDescription> units = scenario.Plant.Units;
        _units = new UnitSimulation[units.Count];
        int instrumentStream = 0;
        for (int u = 0; u < units.Count; u++)
        {
            UnitDescription unit = units[u];
            Fault[] faults = scenario.Faults.Where(f => BelongsTo(f, unit, units)).ToArray();
            foreach (Fault f in faults)
            {
                Check(f, unit);
            }

            Disturbance[] disturbances = scenario.Disturbances.Where(d => d.Unit == unit.Id || (d.Unit is null && units.Count == 1)).ToArray();
            _units[u] = new UnitSimulation(unit, scenario, faults, disturbances, instrumentStream, labStream: 1_000_000 + u);
            instrumentStream += unit.Instruments.Count;
        }
    }

    /// <summary>The scenario run.</summary>
    public Scenario Scenario { get; }

    /// <summary>Steps of the run: samples are taken at the start and after each step but the last.</summary>
    public long StepCount { get; }

    /// <summary>Steps taken so far.</summary>
    public long StepIndex { get; private set; }

    /// <summary>True when every step has been taken.</summary>
    public bool Finished => StepIndex >= StepCount;

    /// <summary>Time of the next samples (UTC).</summary>
    public DateTimeOffset Time => Scenario.Start + TimeSpan.FromSeconds(StepIndex * _stepSeconds);

    /// <summary>The faults of a unit with absolute times, as the truth file records them.</summary>
    public IReadOnlyList<TruthFault> TruthFaults(string unitId) => Unit(unitId).TruthFaults;

    /// <summary>Samples the plant at <see cref="Time"/>, hands everything to the sink, and integrates one step.</summary>
    /// <exception cref="InvalidOperationException">The run is finished.</exception>
    /// <exception cref="Core.Dynamics.SimulationException">A stage left the two-phase region.</exception>
    public void Step(ISimulationSink sink)
    {
        ArgumentNullException.ThrowIfNull(sink);
        if (Finished)
        {
            throw new InvalidOperationException("the run is finished");
        }

        double seconds = StepIndex * _stepSeconds;
        DateTimeOffset time = Time;
        foreach (UnitSimulation unit in _units)
        {
            unit.Prepare(seconds);
            unit.Emit(sink, seconds, time);
            unit.Dynamics.Advance(_stepSeconds);
        }

        StepIndex++;
    }

    internal UnitSimulation Unit(string unitId) =>
        _units.FirstOrDefault(u => u.Unit.Id == unitId) ?? throw new ArgumentException($"the plant has no unit '{unitId}'", nameof(unitId));

    private static bool BelongsTo(Fault f, UnitDescription unit, IReadOnlyList<UnitDescription> units)
    {
        if (f.Unit is not null)
        {
            return f.Unit == unit.Id;
        }

        if (f.Tag is not null)
        {
            return unit.FindInstrument(f.Tag) is not null;
        }

        return units.Count == 1;
    }

    private static void Check(Fault f, UnitDescription unit)
    {
        if (f.Stage is int stage && (stage < 1 || stage > unit.Stages))
        {
            throw new ArgumentException($"a {Fault.KindName(f.Kind)} fault names stage {stage}, but unit {unit.Id} has stages 1 to {unit.Stages}");
        }

        if (f.Kind == FaultKind.Entrainment && f.Stage is null)
        {
            throw new ArgumentException($"an entrainment fault in unit {unit.Id} needs a stage");
        }

        if (f.Kind == FaultKind.Entrainment && !(f.Value >= 0 && f.Value < 1))
        {
            throw new ArgumentException($"an entrainment fault's fraction must be in [0, 1), found {f.Value}");
        }

        if (f.Tag is not null && unit.FindInstrument(f.Tag) is null)
        {
            throw new ArgumentException($"a {Fault.KindName(f.Kind)} fault names tag {f.Tag}, which unit {unit.Id} does not have");
        }
    }
}
