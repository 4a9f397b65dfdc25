using Tieflow.Core.Monitoring;

namespace Tieflow.Service.Replay;

/// <summary>
/// Puts history rows back in time order within a window of source time, as real exports need (rows a few seconds out
/// of order, rows exported twice). Each row comes with its tag's rank (the plant file's instrument order). A row waits
/// until a row more than the window newer has been seen, then comes out in order of time and, within one time, of rank:
/// the order the simulator writes, so that a history gives the same analysis however an export ordered the rows of one
/// time. A second row for the same tag and time is dropped: a duplicate when it has the same value and quality, else a
/// conflict (the first row is kept). A row older than the newest row seen by more than the window is late and dropped.
/// Memory is bounded by the rows of one window.
/// </summary>
internal sealed class ReorderBuffer
{
    private readonly long _window;
    private (SignalSample Sample, int Rank)[] _items = new (SignalSample, int)[256];
    private int _head;
    private int _count;
    private long _newest = long.MinValue;

    /// <param name="window">The window of source time (zero: rows must come in time order).</param>
    public ReorderBuffer(TimeSpan window)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(window, TimeSpan.Zero);
        _window = window.Ticks;
    }

    /// <summary>Exact repeats dropped (same tag, time, value and quality).</summary>
    public long Duplicates { get; private set; }

    /// <summary>Rows dropped for a tag and time already seen with another value or quality (the first row is kept).</summary>
    public long Conflicts { get; private set; }

    /// <summary>Rows dropped for coming later than the window allows.</summary>
    public long Late { get; private set; }

    /// <summary>Takes a row; then take the rows it releases with <see cref="TryRelease"/>.</summary>
    /// <param name="sample">The row.</param>
    /// <param name="rank">Its tag's rank: one number per tag, the order of rows of the same time.</param>
    public void Add(in SignalSample sample, int rank)
    {
        long t = sample.Time.UtcTicks;
        if (_newest != long.MinValue && t < _newest - _window)
        {
            Late++;
            return;
        }

        if (t > _newest)
        {
            _newest = t;
        }

        int mask = _items.Length - 1;
        int at = _count;
        while (at > 0 && After(_items[(_head + at - 1) & mask], t, rank))
        {
            at--;
        }

        // Ordered by time and rank, a row of the same tag and time is the one just before the place of this one.
        if (at > 0 && _items[(_head + at - 1) & mask] is var (other, otherRank) && otherRank == rank && other.Time.UtcTicks == t)
        {
            if (other.Value.Equals(sample.Value) && other.Quality == sample.Quality)
            {
                Duplicates++;
            }
            else
            {
                Conflicts++;
            }

            return;
        }

        if (_count == _items.Length)
        {
            Grow();
            mask = _items.Length - 1;
        }

        for (int k = _count; k > at; k--)
        {
            _items[(_head + k) & mask] = _items[(_head + k - 1) & mask];
        }

        _items[(_head + at) & mask] = (sample, rank);
        _count++;
    }

    /// <summary>The oldest row when the window has passed it.</summary>
    /// <param name="sample">The row.</param>
    public bool TryRelease(out SignalSample sample)
    {
        if (_count > 0 && _items[_head].Sample.Time.UtcTicks < _newest - _window)
        {
            sample = Take();
            return true;
        }

        sample = default;
        return false;
    }

    /// <summary>The oldest row still held, at the end of the history.</summary>
    /// <param name="sample">The row.</param>
    public bool TryDrain(out SignalSample sample)
    {
        if (_count > 0)
        {
            sample = Take();
            return true;
        }

        sample = default;
        return false;
    }

    private static bool After((SignalSample Sample, int Rank) item, long ticks, int rank)
    {
        long t = item.Sample.Time.UtcTicks;
        return t > ticks || (t == ticks && item.Rank > rank);
    }

    private SignalSample Take()
    {
        SignalSample s = _items[_head].Sample;
        _items[_head] = default;
        _head = (_head + 1) & (_items.Length - 1);
        _count--;
        return s;
    }

    private void Grow()
    {
        var items = new (SignalSample, int)[_items.Length * 2];
        for (int k = 0; k < _count; k++)
        {
            items[k] = _items[(_head + k) & (_items.Length - 1)];
        }

        _items = items;
        _head = 0;
    }
}
