using MathNet.Numerics.Distributions;
using Tieflow.Core.Plant;

namespace Tieflow.Core.Monitoring.Signals;

/// <summary>
/// Checks the readings of one tag in time order: quality from the source, transmitter range, staleness, a frozen
/// signal (variance test against the instrument's sigma) and spikes (robust z-score). For an analyzer only new values
/// count: a value that arrives sooner than half an update interval after the last one is a held repeat. Pure and
/// deterministic: time comes from the readings.
/// </summary>
public sealed class SignalChecker
{
    private readonly Instrument _instrument;
    private readonly SignalCheckSettings _settings;
    private readonly double[] _recent;
    private readonly double[] _scratch;
    private readonly double[] _sorted;
    private int _sortedCount;
    private readonly double _frozenCritical;
    private readonly TimeSpan _heldWithin;
    private readonly TimeSpan _staleAfter;
    private int _count;
    private int _next;
    private DateTimeOffset? _lastUpdate;
    private double _lastValue = double.NaN;
    private double _pendingSpike;
    private double _pendingSpikeValue;
    private SignalQuality _lastQuality = SignalQuality.Good;

    // Running sums of the recent values less a shift (a recent value, so that the sums do not cancel), for the frozen
    // test's spread; summed afresh every time the history has turned over once, so that rounding cannot accumulate.
    private double _shift = double.NaN;
    private double _shiftedSum;
    private double _shiftedSquares;
    private int _sinceExact;

    /// <summary>Creates the checker of one instrument.</summary>
    /// <param name="instrument">The instrument (sigma and range in its engineering unit).</param>
    /// <param name="settings">Check settings; defaults when null.</param>
    public SignalChecker(Instrument instrument, SignalCheckSettings? settings = null)
    {
        ArgumentNullException.ThrowIfNull(instrument);
        _instrument = instrument;
        _settings = settings ?? new SignalCheckSettings();
        int history = Math.Max(3, instrument.IsAnalyzer ? _settings.AnalyzerHistory : _settings.ContinuousHistory);
        _recent = new double[history];
        _scratch = new double[history];
        _sorted = new double[history];
        _frozenCritical = ChiSquared.InvCDF(history - 1, _settings.FrozenProbability);
        UpdateInterval = instrument.UpdateInterval ?? _settings.ContinuousUpdateInterval;
        _heldWithin = UpdateInterval * 1.5;
        _staleAfter = UpdateInterval * _settings.StaleIntervals;
    }

    /// <summary>Time between updates that the checks expect.</summary>
    public TimeSpan UpdateInterval { get; }

    /// <summary>The tag's current problem.</summary>
    public SignalProblem Problem { get; private set; }

    /// <summary>Time of the last new value, or null before the first.</summary>
    public DateTimeOffset? LastUpdate => _lastUpdate;

    /// <summary>Checks one reading.</summary>
    /// <param name="sample">The reading, in the tag's engineering unit.</param>
    public TagCheckState Check(in SignalSample sample)
    {
        // An analyzer holds its value between updates: a repeat of the last value is a held value unless it comes so long
        // after the last update (1.5 intervals) that it must be a new value that happens to be equal.
        if (_instrument.IsAnalyzer && _lastUpdate is { } last && sample.Quality != SignalQuality.Bad && _lastQuality != SignalQuality.Bad
            && sample.Value.Equals(_lastValue) && sample.Time - last < _heldWithin)
        {
            return new TagCheckState(false, false, Problem, Describe(Problem));
        }

        _lastUpdate = sample.Time;
        _lastValue = sample.Value;
        _lastQuality = sample.Quality;
        if (sample.Quality == SignalQuality.Bad || !double.IsFinite(sample.Value))
        {
            return Set(SignalProblem.BadQuality, used: false);
        }

        if (!_instrument.InRange(sample.Value))
        {
            return Set(SignalProblem.OutOfRange, used: false);
        }

        if (_count >= _recent.Length && IsSpike(sample.Value, out double side))
        {
            // A spike is left out, and not added to the history that judges the next reading; but two in a row on the
            // same side are a real change of level (a process step), and the history restarts from them.
            if (_pendingSpike != 0 && Math.Sign(side) == Math.Sign(_pendingSpike))
            {
                _recent[0] = _pendingSpikeValue;
                _next = 1;
                _count = 1;
                _sorted[0] = _pendingSpikeValue;
                _sortedCount = 1;
                _pendingSpike = 0;
                RestartSums(_pendingSpikeValue);
            }
            else
            {
                _pendingSpike = side;
                _pendingSpikeValue = sample.Value;
                return new TagCheckState(false, true, SignalProblem.Spike, Describe(SignalProblem.Spike));
            }
        }
        else
        {
            _pendingSpike = 0;
        }

        if (_count == _recent.Length)
        {
            double leaving = _recent[_next];
            ReplaceSorted(leaving, sample.Value);
            Slide(leaving, sample.Value);
        }
        else
        {
            InsertSorted(sample.Value);
            Slide(double.NaN, sample.Value);
        }

        _recent[_next] = sample.Value;
        _next = (_next + 1) % _recent.Length;
        _count = Math.Min(_count + 1, _recent.Length);
        if (_count >= _recent.Length && IsFrozen())
        {
            return Set(SignalProblem.Frozen, used: false);
        }

        return Set(SignalProblem.None, used: true);
    }

    /// <summary>Advances the tag's clock without a reading: marks it stale when no new value came for too long.</summary>
    /// <param name="now">The data time reached.</param>
    /// <returns>The tag's problem after the check.</returns>
    public SignalProblem Advance(DateTimeOffset now)
    {
        if (_lastUpdate is { } last && now - last > _staleAfter)
        {
            Set(SignalProblem.Stale, used: false);
        }

        return Problem;
    }

    /// <summary>What a person reads about a problem of this tag.</summary>
    /// <param name="problem">The problem.</param>
    public string Describe(SignalProblem problem) => problem switch
    {
        SignalProblem.None => string.Empty,
        SignalProblem.BadQuality => $"{_instrument.Tag} reports bad quality",
        SignalProblem.OutOfRange => $"{_instrument.Tag} reads outside its range [{_instrument.RangeLow:G6}, {_instrument.RangeHigh:G6}] {_instrument.Unit.Name}",
        SignalProblem.Stale => $"{_instrument.Tag} has sent no new value for more than {_settings.StaleIntervals:G3} update intervals ({UpdateInterval})",
        SignalProblem.Frozen => $"{_instrument.Tag} has stopped changing: its last {_recent.Length} values vary far less than its sigma {_instrument.Sigma:G3} {_instrument.Unit.Name}",
        _ => $"{_instrument.Tag} jumped far from its recent values (robust z-score above {_settings.SpikeZ:G3})",
    };

    private TagCheckState Set(SignalProblem problem, bool used)
    {
        Problem = problem;
        return new TagCheckState(used, true, problem, Describe(problem));
    }

    private bool IsFrozen()
    {
        // Quantisation alone leaves a spread of about resolution^2 / 12 per reading; a signal whose noise is below its
        // resolution cannot be judged frozen by its spread.
        double sigma = _instrument.Sigma;
        if (_instrument.Resolution > 0 && _instrument.Resolution > sigma)
        {
            return false;
        }

        // The running sums give the spread to within rounding, far less than the margin; the exact loops below decide
        // only a spread that close to the limit.
        int n = _recent.Length;
        double running = _shiftedSquares - (_shiftedSum * _shiftedSum / n);
        double limit = _frozenCritical * sigma * sigma;
        double margin = (1e-9 * limit) + (1e-12 * _shiftedSquares);
        if (running > limit + margin)
        {
            return false;
        }

        if (running < limit - margin)
        {
            return true;
        }

        double mean = 0;
        for (int i = 0; i < _recent.Length; i++)
        {
            mean += _recent[i];
        }

        mean /= _recent.Length;
        double ss = 0;
        for (int i = 0; i < _recent.Length; i++)
        {
            double d = _recent[i] - mean;
            ss += d * d;
        }

        return ss / (sigma * sigma) < _frozenCritical;
    }

    private bool IsSpike(double value, out double side)
    {
        // The recent values are kept sorted as they come, so that the median is at hand. A reading within the larger
        // of the two limits, in instrument sigmas, cannot be a spike whatever the spread (the robust scale is never
        // below sigma), and needs no median absolute deviation: the common case.
        double median = Median(_sorted);
        side = value - median;
        double deviation = Math.Abs(side);
        double sigma = _instrument.Sigma;
        if (!(deviation > _settings.SpikeSigmas * sigma) || deviation / sigma <= _settings.SpikeZ)
        {
            return false;
        }

        Array.Copy(_sorted, _scratch, _sorted.Length);
        for (int i = 0; i < _scratch.Length; i++)
        {
            _scratch[i] = Math.Abs(_scratch[i] - median);
        }

        Array.Sort(_scratch);

        // 1.4826 makes the median absolute deviation a consistent estimate of sigma for normal data
        // (Rousseeuw and Croux, J. Am. Stat. Assoc. 88(424), 1993, 1273-1283).
        double scale = Math.Max(1.4826 * Median(_scratch), _instrument.Sigma);
        return deviation / scale > _settings.SpikeZ && deviation > _settings.SpikeSigmas * _instrument.Sigma;
    }

    private void InsertSorted(double value)
    {
        int at = _sortedCount;
        while (at > 0 && _sorted[at - 1] > value)
        {
            _sorted[at] = _sorted[at - 1];
            at--;
        }

        _sorted[at] = value;
        _sortedCount++;
    }

    private void ReplaceSorted(double leaving, double value)
    {
        // The leaving value's place (the first element not below it: the value itself, which is always there), then the
        // elements between it and the new value's place moved by one: the same order as removing and inserting.
        int lo = 0, hi = _sortedCount;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_sorted[mid] < leaving)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        int at = lo;
        while (at + 1 < _sortedCount && _sorted[at + 1] < value)
        {
            _sorted[at] = _sorted[at + 1];
            at++;
        }

        while (at > 0 && _sorted[at - 1] > value)
        {
            _sorted[at] = _sorted[at - 1];
            at--;
        }

        _sorted[at] = value;
    }

    /// <summary>Updates the running sums for a value leaving the history (NaN for none) and one entering.</summary>
    private void Slide(double leaving, double entering)
    {
        if (double.IsNaN(_shift))
        {
            RestartSums(entering);
            return;
        }

        double e = entering - _shift;
        _shiftedSum += e;
        _shiftedSquares += e * e;
        if (!double.IsNaN(leaving))
        {
            double l = leaving - _shift;
            _shiftedSum -= l;
            _shiftedSquares -= l * l;
            if (++_sinceExact >= _recent.Length)
            {
                // The history has turned over: the sums afresh about its current middle (the entering value is in the
                // history from here on, the leaving one no longer).
                _recent[_next] = entering;
                _shift = _sorted[_sortedCount / 2];
                _shiftedSum = 0;
                _shiftedSquares = 0;
                for (int i = 0; i < _recent.Length; i++)
                {
                    double d = _recent[i] - _shift;
                    _shiftedSum += d;
                    _shiftedSquares += d * d;
                }

                _sinceExact = 0;
            }
        }
    }

    private void RestartSums(double first)
    {
        _shift = first;
        _shiftedSum = 0;
        _shiftedSquares = 0;
        _sinceExact = 0;
    }

    private static double Median(double[] sorted)
    {
        int n = sorted.Length;
        return n % 2 == 1 ? sorted[n / 2] : 0.5 * (sorted[(n / 2) - 1] + sorted[n / 2]);
    }
}
