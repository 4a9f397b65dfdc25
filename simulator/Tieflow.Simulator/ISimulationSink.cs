using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator;

/// <summary>Receives what a <see cref="PlantSimulation"/> produces, as it produces it (nothing is kept by the simulation).</summary>
public interface ISimulationSink
{
    /// <summary>One instrument's reading at one step (every instrument at every step, in plant order).</summary>
    /// <param name="unit">The unit the instrument belongs to.</param>
    /// <param name="instrument">The instrument.</param>
    /// <param name="sample">Its reading, in the instrument's engineering unit.</param>
    void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample);

    /// <summary>A lab result, at the step when it is reported.</summary>
    void OnLabResult(LabResult result);

    /// <summary>The true state of a unit, once a simulated minute.</summary>
    void OnTruth(UnitDescription unit, TruthSample sample);
}
