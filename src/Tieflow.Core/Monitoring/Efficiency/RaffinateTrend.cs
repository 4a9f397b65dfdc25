namespace Tieflow.Core.Monitoring.Efficiency;

/// <summary>
/// The trend of the raffinate leaving each stage, from the last few window means of its analyzer: a weighted
/// least-squares line with the sigma of its slope. The steady-state gate uses it: a train whose settlers hold an hour of
/// flow keeps moving for many hours after a feed change, slower than one window-to-window comparison can see, and the
/// hold-ups' accumulation then enters the balances as if it were transfer between the phases, biasing the efficiencies.
/// </summary>
public sealed class RaffinateTrend
{
    private readonly int _points;
    private readonly Queue<(double Hours, double Value, double Sigma)>[] _history;

    /// <summary>Creates the trend store for a unit.</summary>
    /// <param name="stages">Number of stages.</param>
    /// <param name="points">Window means in the least-squares line (at least 3).</param>
    public RaffinateTrend(int stages, int points = 4)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(points, 3);
        _points = points;
        _history = new Queue<(double, double, double)>[stages];
        for (int k = 0; k < stages; k++)
        {
            _history[k] = new Queue<(double, double, double)>(points + 1);
        }
    }

    /// <summary>Adds the window mean of the raffinate leaving a stage.</summary>
    /// <param name="stage">1-based stage.</param>
    /// <param name="hours">Centre of the window, hours on any fixed origin.</param>
    /// <param name="value">Mean solute fraction.</param>
    /// <param name="sigma">Sigma of the mean.</param>
    public void Add(int stage, double hours, double value, double sigma)
    {
        Queue<(double, double, double)> q = _history[stage - 1];
        q.Enqueue((hours, value, sigma));
        while (q.Count > _points)
        {
            q.Dequeue();
        }
    }

    /// <summary>Forgets a stage's history (its analyzer failed: a line across a gap says nothing about now).</summary>
    /// <param name="stage">1-based stage.</param>
    public void Forget(int stage) => _history[stage - 1].Clear();

    /// <summary>The slope dx/dt (fraction per hour) with its sigma, when the stage has a full history ending at <paramref name="hours"/>.</summary>
    /// <param name="stage">1-based stage.</param>
    /// <param name="hours">Centre of the current window.</param>
    /// <param name="spanHours">The longest span the points may cover (older histories have gaps).</param>
    public (double Slope, double Sigma)? Slope(int stage, double hours, double spanHours)
    {
        Queue<(double Hours, double Value, double Sigma)> q = _history[stage - 1];
        if (q.Count < _points)
        {
            return null;
        }

        double first = double.PositiveInfinity, last = double.NegativeInfinity, sw = 0, st = 0, sv = 0;
        foreach ((double t, double v, double s) in q)
        {
            first = Math.Min(first, t);
            last = Math.Max(last, t);
            double w = 1 / (s * s);
            sw += w;
            st += w * t;
            sv += w * v;
        }

        if (Math.Abs(last - hours) > 1e-9 || last - first > spanHours)
        {
            return null;
        }

        double tm = st / sw, vm = sv / sw, stt = 0, stv = 0;
        foreach ((double t, double v, double s) in q)
        {
            double w = 1 / (s * s);
            stt += w * (t - tm) * (t - tm);
            stv += w * (t - tm) * (v - vm);
        }

        return stt > 0 ? (stv / stt, Math.Sqrt(1 / stt)) : null;
    }
}
