using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Instruments;

/// <summary>
/// One simulated instrument: turns the true value of what it measures into the reading a historian records at every
/// step. Order: the true value in the engineering unit; Gaussian noise of the instrument's sigma; sensor-bias and
/// sensor-drift offsets; quantisation to the resolution; the transmitter's range (a reading outside is clamped to the
/// range end and has bad quality). An analyzer takes a new value only at its update times
/// (updateOffset + k updateInterval), describing the process deadTime earlier, and holds it in between.
/// Signal faults act last: signal-bad gives bad quality; sensor-stuck and signal-frozen hold the last reading before
/// the fault with good quality.
/// </summary>
internal sealed class InstrumentChannel
{
    private readonly GaussianSource _noise;
    private readonly Fault[] _faults;
    private readonly double _step;
    private readonly bool _analyzer;
    private readonly double _interval;
    private readonly double _offset;
    private readonly double[] _delay;
    private readonly int _delaySteps;
    private readonly int _decimals;
    private long _pushed;
    private double _nextUpdate;
    private bool _started;
    private double _heldValue;
    private SignalQuality _heldQuality;
    private double _lastValue;
    private double _holdValue;
    private bool _holding;

    public InstrumentChannel(Instrument instrument, int index, int seed, IEnumerable<Fault> faults, TimeSpan step)
    {
        Instrument = instrument;
        Index = index;
        _noise = new GaussianSource(seed, index);
        _faults = faults.Where(f => f.Tag == instrument.Tag).ToArray();
        _step = step.TotalSeconds;
        _analyzer = instrument.IsAnalyzer;
        _interval = instrument.UpdateInterval?.TotalSeconds ?? 0;
        _offset = instrument.UpdateOffset.TotalSeconds;
        double dead = instrument.DeadTime?.TotalSeconds ?? 0;
        _delaySteps = _analyzer ? (int)Math.Round(dead / _step) : 0;
        _delay = new double[_delaySteps + 1];
        double digits = -Math.Log10(instrument.Resolution);
        _decimals = instrument.Resolution > 0 && Math.Abs(digits - Math.Round(digits)) < 1e-9 && digits >= 0 && digits <= 15 ? (int)Math.Round(digits) : -1;
    }

    public Instrument Instrument { get; }

    /// <summary>Position of the instrument in the plant (also its noise stream).</summary>
    public int Index { get; }

    /// <summary>The reading at <paramref name="seconds"/> after the start, from the true value now (base unit).</summary>
    public SignalSample Sample(double seconds, DateTimeOffset time, double trueBase)
    {
        bool update;
        double described;
        if (_analyzer)
        {
            _delay[(int)(_pushed % _delay.Length)] = trueBase;
            _pushed++;

            // The process was steady before the run began: older than the first step is the first step's value.
            long back = Math.Min(_delaySteps, _pushed - 1);
            described = _delay[(int)((_pushed - 1 - back) % _delay.Length)];
            update = !_started || seconds + 1e-9 >= _nextUpdate;
            if (update)
            {
                _nextUpdate = NextUpdateAfter(seconds);
            }
        }
        else
        {
            update = true;
            described = trueBase;
        }

        if (update)
        {
            (_heldValue, _heldQuality) = Read(seconds, described);
        }

        _started = true;
        double value = _heldValue;
        SignalQuality quality = _heldQuality;
        var elapsed = TimeSpan.FromSeconds(seconds);
        bool bad = false, hold = false;
        foreach (Fault f in _faults)
        {
            if (!f.IsActive(elapsed))
            {
                continue;
            }

            bad |= f.Kind == FaultKind.SignalBad;
            hold |= f.Kind is FaultKind.SensorStuck or FaultKind.SignalFrozen;
        }

        if (hold)
        {
            if (!_holding)
            {
                _holdValue = _lastValue;
                _holding = true;
            }

            value = _holdValue;
            quality = SignalQuality.Good;
        }
        else
        {
            _holding = false;
        }

        if (bad)
        {
            quality = SignalQuality.Bad;
        }

        _lastValue = value;
        return new SignalSample(Instrument.Tag, time, value, quality);
    }

    private double NextUpdateAfter(double seconds)
    {
        double k = Math.Floor(((seconds - _offset) / _interval) + 1e-9) + 1;
        return _offset + (Math.Max(k, 0) * _interval);
    }

    private (double Value, SignalQuality Quality) Read(double seconds, double trueBase)
    {
        Instrument i = Instrument;
        double reading = i.Unit.FromBase(trueBase) + (i.Sigma * _noise.NextStandardNormal());
        var elapsed = TimeSpan.FromSeconds(seconds);
        foreach (Fault f in _faults)
        {
            if (!f.IsActive(elapsed))
            {
                continue;
            }

            if (f.Kind == FaultKind.SensorBias)
            {
                reading += f.Value;
            }
            else if (f.Kind == FaultKind.SensorDrift)
            {
                reading += f.Value * (elapsed - f.Start).TotalHours;
            }
        }

        if (i.Resolution > 0)
        {
            // A decimal resolution (0.1, 0.01) rounds to decimals, so that 453.4 is not written as 453.40000000000003.
            reading = _decimals >= 0 ? Math.Round(reading, _decimals) : Math.Round(reading / i.Resolution) * i.Resolution;
        }

        if (reading < i.RangeLow || reading > i.RangeHigh)
        {
            return (Math.Clamp(reading, i.RangeLow, i.RangeHigh), SignalQuality.Bad);
        }

        return (reading, SignalQuality.Good);
    }
}
