using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Instruments;

/// <summary>
/// The simulated lab of one unit: every lab point is sampled at the scenario's start and then every
/// <see cref="LabSchedule.Interval"/>; each result is the true fraction plus Gaussian noise of the lab's sigma
/// (clamped to [0, 1]) and is reported <see cref="LabSchedule.Delay"/> after the sample was drawn. Results not yet
/// reported when the run ends are not known, so they are never written.
/// </summary>
internal sealed class LabSampler
{
    private readonly LabSchedule _schedule;
    private readonly GaussianSource _noise;
    private readonly Queue<LabResult> _pending = new();
    private readonly (LabPoint Point, string Stream, string Component)[] _points;
    private double _nextDraw;

    public LabSampler(UnitDescription unit, LabSchedule schedule, int seed, int stream, bool qualifyWithUnit)
    {
        _schedule = schedule;
        _noise = new GaussianSource(seed, stream);

        // With several units in one plant the stream names alone would be ambiguous in the lab file: UNIT/stream.
        _points = unit.Labs.Select(p => (p, qualifyWithUnit ? $"{unit.Id}/{unit.StreamName(p.Stream)}" : unit.StreamName(p.Stream), unit.System.Components[(int)p.Component].Id)).ToArray();
    }

    public void Step(ISimulationSink sink, double seconds, DateTimeOffset time, UnitSimulation unit)
    {
        if (seconds + 1e-9 >= _nextDraw)
        {
            _nextDraw += _schedule.Interval.TotalSeconds;
            foreach ((LabPoint point, string stream, string component) in _points)
            {
                double truth = unit.Stream(point.Stream).Composition[point.Component];
                double value = Math.Clamp(truth + (_schedule.Sigma * _noise.NextStandardNormal()), 0, 1);
                _pending.Enqueue(new LabResult(time, time + _schedule.Delay, stream, component, value));
            }
        }

        while (_pending.Count > 0 && _pending.Peek().Reported <= time)
        {
            sink.OnLabResult(_pending.Dequeue());
        }
    }
}
