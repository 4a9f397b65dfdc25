using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Tests;

/// <summary>Keeps everything a short simulation produces, for assertions.</summary>
internal sealed class RecordingSink : ISimulationSink
{
    public List<SignalSample> Samples { get; } = [];

    public List<LabResult> Labs { get; } = [];

    public List<TruthSample> Truth { get; } = [];

    public IEnumerable<SignalSample> Of(string tag) => Samples.Where(s => s.Tag == tag);

    public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample) => Samples.Add(sample);

    public void OnLabResult(LabResult result) => Labs.Add(result);

    public void OnTruth(UnitDescription unit, TruthSample sample) => Truth.Add(sample);
}
