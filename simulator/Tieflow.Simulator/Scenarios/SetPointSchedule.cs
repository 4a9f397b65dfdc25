using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Scenarios;

/// <summary>
/// One set value over time: the nominal value, then each disturbance of its kind in start order, each moving the
/// value linearly from where it is at the disturbance's start to the new value over the disturbance's ramp.
/// </summary>
internal sealed class SetPointSchedule
{
    private readonly double _nominal;
    private readonly (double Start, double Ramp, double Value)[] _changes;

    public SetPointSchedule(double nominal, IEnumerable<Disturbance> disturbances)
    {
        _nominal = nominal;
        _changes = disturbances.OrderBy(d => d.Start).Select(d => (d.Start.TotalSeconds, d.Ramp.TotalSeconds, d.Value)).ToArray();
    }

    /// <summary>The set value <paramref name="seconds"/> after the scenario's start.</summary>
    public double At(double seconds)
    {
        double value = _nominal;
        for (int i = 0; i < _changes.Length; i++)
        {
            (double start, double ramp, double target) = _changes[i];
            if (seconds < start)
            {
                break;
            }

            // A later change starts from wherever the earlier ones had brought the value at its start.
            double from = value;
            if (i + 1 < _changes.Length && seconds >= _changes[i + 1].Start)
            {
                double end = _changes[i + 1].Start;
                value = ramp > 0 && end - start < ramp ? from + ((target - from) * (end - start) / ramp) : target;
                continue;
            }

            value = ramp > 0 && seconds - start < ramp ? from + ((target - from) * (seconds - start) / ramp) : target;
        }

        return value;
    }
}
