namespace Tieflow.Service.Report;

/// <summary>
/// A time series kept to at most <see cref="Capacity"/> points however long the history: values fall into time buckets
/// of equal width, and when there are too many buckets, neighbouring pairs merge and the width doubles. The result depends
/// only on the values and their times (deterministic), and memory does not grow with the length of the history.
/// </summary>
internal sealed class DecimatedSeries
{
    private readonly SortedDictionary<long, Bucket> _buckets = [];
    private DateTimeOffset? _origin;
    private long _widthTicks;

    /// <summary>Creates an empty series.</summary>
    /// <param name="capacity">Most points kept (at least 2).</param>
    /// <param name="initialWidth">Bucket width to start with (for example the analysis window).</param>
    public DecimatedSeries(int capacity, TimeSpan initialWidth)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 2);
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(initialWidth, TimeSpan.Zero);
        Capacity = capacity;
        _widthTicks = initialWidth.Ticks;
    }

    /// <summary>Most points kept.</summary>
    public int Capacity { get; }

    /// <summary>Values added (finite ones only).</summary>
    public long Count { get; private set; }

    /// <summary>The current bucket width.</summary>
    public TimeSpan Width => TimeSpan.FromTicks(_widthTicks);

    /// <summary>The last finite value added, or NaN.</summary>
    public double Last { get; private set; } = double.NaN;

    /// <summary>Adds a value; non-finite values are ignored (they are gaps).</summary>
    public void Add(DateTimeOffset time, double value, double sigma = 0)
    {
        if (!double.IsFinite(value))
        {
            return;
        }

        if (!double.IsFinite(sigma) || sigma < 0)
        {
            sigma = 0;
        }

        _origin ??= time;
        long index = Index(time);
        if (!_buckets.TryGetValue(index, out Bucket? b))
        {
            _buckets[index] = b = new Bucket();
        }

        b.Add(time, value, sigma);
        Count++;
        Last = value;
        while (_buckets.Count > Capacity)
        {
            Merge();
        }
    }

    /// <summary>The points in time order.</summary>
    public IReadOnlyList<SeriesPoint> Points() => [.. _buckets.Values.Select(b => b.Point())];

    private long Index(DateTimeOffset time) => (long)Math.Floor((time - _origin!.Value).Ticks / (double)_widthTicks);

    private void Merge()
    {
        var merged = new SortedDictionary<long, Bucket>();
        foreach ((long index, Bucket b) in _buckets)
        {
            long to = (long)Math.Floor(index / 2.0);
            if (merged.TryGetValue(to, out Bucket? into))
            {
                into.Add(b);
            }
            else
            {
                merged[to] = b;
            }
        }

        _buckets.Clear();
        foreach ((long index, Bucket b) in merged)
        {
            _buckets[index] = b;
        }

        _widthTicks *= 2;
    }

    private sealed class Bucket
    {
        private double _sumTicks;
        private double _sumValue;
        private double _sumSigma;
        private double _min = double.PositiveInfinity;
        private double _max = double.NegativeInfinity;
        private long _count;
        private long _firstTicks;

        public void Add(DateTimeOffset time, double value, double sigma)
        {
            if (_count == 0)
            {
                _firstTicks = time.UtcTicks;
            }

            _sumTicks += time.UtcTicks - _firstTicks;
            _sumValue += value;
            _sumSigma += sigma;
            _min = Math.Min(_min, value);
            _max = Math.Max(_max, value);
            _count++;
        }

        public void Add(Bucket other)
        {
            // Times are summed as offsets from the first time of this bucket, to keep the precision of a double.
            _sumTicks += other._sumTicks + (other._count * (double)(other._firstTicks - _firstTicks));
            _sumValue += other._sumValue;
            _sumSigma += other._sumSigma;
            _min = Math.Min(_min, other._min);
            _max = Math.Max(_max, other._max);
            _count += other._count;
        }

        public SeriesPoint Point() => new(
            new DateTimeOffset(_firstTicks + (long)Math.Round(_sumTicks / _count), TimeSpan.Zero),
            _sumValue / _count,
            _sumSigma / _count,
            _min,
            _max);
    }
}
