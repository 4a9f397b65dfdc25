using System.Threading.Channels;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;
using Tieflow.Simulator;
using Tieflow.Core.Dynamics;

namespace Tieflow.Service.Sources.Simulator;

/// <summary>
/// The simulated plant in process: runs a scenario step by step and hands every reading and lab result to the monitor,
/// paced on an accelerated clock (<see cref="Speed"/> simulated seconds per second of the injected
/// <see cref="TimeProvider"/>; a huge factor runs as fast as the monitor takes the readings). The samples carry the
/// simulated time, which starts at the scenario's start. Ends when the scenario does.
/// </summary>
internal sealed class SimulatorSource : ISignalSource
{
    private readonly Scenario _scenario;
    private readonly TimeProvider _time;

    public SimulatorSource(Scenario scenario, double speed, TimeProvider time)
    {
        ArgumentNullException.ThrowIfNull(scenario);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(speed);
        _scenario = scenario;
        Speed = speed;
        _time = time;
    }

    public string Name => "simulator";

    /// <summary>Simulated seconds per second of the clock.</summary>
    public double Speed { get; }

    /// <summary>The scenario simulated.</summary>
    public Scenario Scenario => _scenario;

    public async Task RunAsync(ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(output);
        var simulation = new PlantSimulation(_scenario);
        var sink = new Collector();
        await output.WriteAsync(new SourceStateChanged(SourceState.Connected, simulation.Time, $"simulated plant at {Speed:G4}x real time"), cancellationToken).ConfigureAwait(false);
        double stepSeconds = _scenario.Step.TotalSeconds;
        long started = _time.GetTimestamp();
        while (!simulation.Finished)
        {
            cancellationToken.ThrowIfCancellationRequested();
            try
            {
                simulation.Step(sink);
            }
            catch (SimulationException e)
            {
                // The model cannot go on (a stage left the two-phase region): the plant is lost for good.
                await output.WriteAsync(new SourceStateChanged(SourceState.Disconnected, simulation.Time, $"the simulation stopped: {e.Message}"), cancellationToken).ConfigureAwait(false);
                return;
            }

            foreach (SourceEvent e in sink.Events)
            {
                await output.WriteAsync(e, cancellationToken).ConfigureAwait(false);
            }

            sink.Events.Clear();

            // The clock time at which the next step is due; wait only when ahead by more than a few milliseconds.
            double due = simulation.StepIndex * stepSeconds / Speed;
            double ahead = due - _time.GetElapsedTime(started).TotalSeconds;
            if (ahead > 0.005)
            {
                await Task.Delay(TimeSpan.FromSeconds(ahead), _time, cancellationToken).ConfigureAwait(false);
            }
        }
    }

    private sealed class Collector : ISimulationSink
    {
        public List<SourceEvent> Events { get; } = new(64);

        public void OnSample(UnitDescription unit, Instrument instrument, in SignalSample sample) => Events.Add(new SampleArrived(sample));

        public void OnLabResult(LabResult result) => Events.Add(new LabArrived(result));

        public void OnTruth(UnitDescription unit, TruthSample sample)
        {
        }
    }
}
