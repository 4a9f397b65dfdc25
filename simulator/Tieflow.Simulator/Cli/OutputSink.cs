using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator.Serving;

namespace Tieflow.Simulator.Cli;

/// <summary>Where a run's output goes: the history, lab and truth files (each optional) and the OPC UA server; everything streamed.</summary>
internal sealed class OutputSink : ISimulationSink, IDisposable
{
    private readonly HistoryCsvWriter? _history;
    private readonly LabCsvWriter? _labs;
    private readonly TruthFileWriter? _truth;

    public OutputSink(PlantSimulation simulation, string? historyPath, string? labsPath, string? truthPath, InstrumentServer? server)
    {
        try
        {
            _history = historyPath is null ? null : HistoryCsvWriter.Create(historyPath);
            _labs = labsPath is null ? null : LabCsvWriter.Create(labsPath);
            IReadOnlyList<UnitDescription> units = simulation.Scenario.Plant.Units;
            _truth = truthPath is null ? null : TruthFileWriter.Create(truthPath, units.Select(u => (u.Id, simulation.TruthFaults(u.Id))).ToArray());
        }
        catch
        {
            Dispose();
            throw;
        }

        Server = server;
    }

    /// <summary>The OPC UA server the readings go to, or null (set once it serves: a run that catches up on its clock serves only from then on).</summary>
    public InstrumentServer? Server { get; set; }

    public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample)
    {
        _history?.Write(sample);
        Server?.Update(sample);
    }

    public void OnLabResult(LabResult result) => _labs?.Write(result);

    public void OnTruth(UnitDescription unit, TruthSample sample) => _truth?.Write(unit.Id, sample);

    /// <summary>Flushes the files, so that a reader sees everything up to now.</summary>
    public void Flush()
    {
        _history?.Flush();
        _labs?.Flush();
    }

    public void Dispose()
    {
        _history?.Dispose();
        _labs?.Dispose();
        _truth?.Dispose();
    }
}
