using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator;

namespace Tieflow.Service.Tests.Replay;

/// <summary>
/// Runs the simulator over a scenario and writes the history, the lab results and the ground truth the way
/// <c>tieflow-sim run</c> does (linked into the report tests too).
/// </summary>
internal static class SimulatedHistory
{
    /// <summary>Simulates the scenario and returns the paths of the history, lab and truth files in the folder.</summary>
    public static (string History, string Labs, string Truth) Write(Scenario scenario, string folder)
    {
        string history = Path.Combine(folder, "history.csv"), labs = Path.Combine(folder, "labs.csv"), truth = Path.Combine(folder, "truth.json");
        var simulation = new PlantSimulation(scenario);
        using (var sink = new FileSink(simulation, scenario.Plant, history, labs, truth))
        {
            while (!simulation.Finished)
            {
                simulation.Step(sink);
            }

            sink.Complete();
        }

        return (history, labs, truth);
    }

    private sealed class FileSink : ISimulationSink, IDisposable
    {
        private readonly HistoryCsvWriter _history;
        private readonly LabCsvWriter _labs;
        private readonly TruthFileWriter _truth;

        public FileSink(PlantSimulation simulation, PlantDescription plant, string history, string labs, string truth)
        {
            _history = HistoryCsvWriter.Create(history);
            _labs = LabCsvWriter.Create(labs);
            _truth = TruthFileWriter.Create(truth, [.. plant.Units.Select(u => (u.Id, simulation.TruthFaults(u.Id)))]);
        }

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample) => _history.Write(sample);

        public void OnLabResult(LabResult result) => _labs.Write(result);

        public void OnTruth(UnitDescription unit, TruthSample sample) => _truth.Write(unit.Id, sample);

        public void Complete() => _truth.Complete();

        public void Dispose()
        {
            _history.Dispose();
            _labs.Dispose();
            _truth.Dispose();
        }
    }
}
