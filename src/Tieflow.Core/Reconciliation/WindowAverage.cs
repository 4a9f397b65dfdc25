namespace Tieflow.Core.Reconciliation;

/// <summary>Averages the samples of a signal over a balance window, for reconciling window means of a steady unit.</summary>
public static class WindowAverage
{
    /// <summary>Mean and spread of the samples.</summary>
    /// <exception cref="ArgumentException">No sample, or a sample that is not finite (its index is named).</exception>
    public static WindowSummary Summarize(ReadOnlySpan<double> samples)
    {
        if (samples.IsEmpty)
        {
            throw new ArgumentException("Expected at least one sample in the window.", nameof(samples));
        }

        // Welford's update: one pass without the cancellation of sum-of-squares formulas.
        double mean = 0;
        double m2 = 0;
        double min = double.PositiveInfinity;
        double max = double.NegativeInfinity;
        for (int i = 0; i < samples.Length; i++)
        {
            double x = samples[i];
            if (!double.IsFinite(x))
            {
                throw new ArgumentException($"Sample {i} is {x}; expected a finite number.", nameof(samples));
            }

            double delta = x - mean;
            mean += delta / (i + 1);
            m2 += delta * (x - mean);
            min = Math.Min(min, x);
            max = Math.Max(max, x);
        }

        int n = samples.Length;
        double sd = n > 1 ? Math.Sqrt(m2 / (n - 1)) : 0;
        return new WindowSummary(n, mean, sd, sd / Math.Sqrt(n), min, max);
    }

    /// <summary>
    /// Mean and spread of the samples whose times lie in the window (end - length, end]; times need not be sorted.
    /// </summary>
    /// <exception cref="ArgumentException">Times and values differ in length, the length is not positive, or no sample lies in the window.</exception>
    public static WindowSummary Summarize(ReadOnlySpan<DateTimeOffset> times, ReadOnlySpan<double> values, DateTimeOffset end, TimeSpan length)
    {
        Preconditions.SameLength(values.Length, times.Length);
        if (length <= TimeSpan.Zero)
        {
            throw new ArgumentException($"The window length {length} must be above zero.", nameof(length));
        }

        DateTimeOffset start = end - length;
        var inside = new List<double>();
        for (int i = 0; i < times.Length; i++)
        {
            if (times[i] > start && times[i] <= end)
            {
                inside.Add(values[i]);
            }
        }

        if (inside.Count == 0)
        {
            throw new ArgumentException($"No sample lies in the window ending {end:O} of length {length}.", nameof(times));
        }

        return Summarize(System.Runtime.InteropServices.CollectionsMarshal.AsSpan(inside));
    }
}
