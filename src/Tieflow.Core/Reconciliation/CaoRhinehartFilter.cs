namespace Tieflow.Core.Reconciliation;

/// <summary>
/// The R-statistic steady-state test of Cao and Rhinehart (J. Process Control 5(6), 363, 1995) for one signal:
/// the ratio of two exponentially filtered variance estimates, one from deviations about the filtered mean and one
/// from successive differences. R stays near one while the signal is steady and grows during a trend.
/// <para>
/// X_f,i = l1 X_i + (1 - l1) X_f,i-1; v2_i = l2 (X_i - X_f,i-1)^2 + (1 - l2) v2_i-1;
/// d2_i = l3 (X_i - X_i-1)^2 + (1 - l3) d2_i-1; R_i = (2 - l1) v2_i / d2_i. The first sample starts the filters
/// (X_f,0 = X_0, variances zero).
/// </para>
/// </summary>
public sealed class CaoRhinehartFilter
{
    private double _filtered;
    private double _previous;
    private double _v2;
    private double _d2;

    /// <summary>Creates a filter.</summary>
    /// <param name="lambda1">Filter factor of the mean, in (0, 1]; default 0.2.</param>
    /// <param name="lambda2">Filter factor of the variance about the mean, in (0, 1]; default 0.1.</param>
    /// <param name="lambda3">Filter factor of the variance of successive differences, in (0, 1]; default 0.1.</param>
    /// <param name="criticalValue">R above which the signal is not steady, above zero; default 1.44, about the 95th
    /// percentile of R for white noise with the default factors (Monte Carlo figure of docs/reference-data.md §6).</param>
    /// <param name="warmUpSamples">Samples before the test may say steady, zero or more; default 10.</param>
    /// <exception cref="ArgumentOutOfRangeException">A factor outside (0, 1], a critical value not above zero, or a negative warm-up.</exception>
    public CaoRhinehartFilter(double lambda1 = 0.2, double lambda2 = 0.1, double lambda3 = 0.1, double criticalValue = 1.44, int warmUpSamples = 10)
    {
        Lambda1 = Factor(lambda1, nameof(lambda1));
        Lambda2 = Factor(lambda2, nameof(lambda2));
        Lambda3 = Factor(lambda3, nameof(lambda3));
        CriticalValue = Preconditions.Positive(criticalValue);
        ArgumentOutOfRangeException.ThrowIfNegative(warmUpSamples);
        WarmUpSamples = warmUpSamples;
        R = double.NaN;
    }

    /// <summary>Filter factor of the mean.</summary>
    public double Lambda1 { get; }

    /// <summary>Filter factor of the variance about the filtered mean.</summary>
    public double Lambda2 { get; }

    /// <summary>Filter factor of the variance of successive differences.</summary>
    public double Lambda3 { get; }

    /// <summary>R above which the signal is taken as not steady.</summary>
    public double CriticalValue { get; }

    /// <summary>Samples needed before <see cref="IsSteady"/> can be true.</summary>
    public int WarmUpSamples { get; }

    /// <summary>Samples taken so far.</summary>
    public int Count { get; private set; }

    /// <summary>The latest R statistic; <see cref="double.NaN"/> before the second sample, zero while the signal has not moved at all.</summary>
    public double R { get; private set; }

    /// <summary>The filtered mean.</summary>
    public double FilteredMean => _filtered;

    /// <summary>Whether the warm-up is over and R is at or below the critical value.</summary>
    public bool IsSteady => Count > WarmUpSamples && Count >= 2 && R <= CriticalValue;

    /// <summary>Takes the next sample and returns the new R statistic.</summary>
    /// <exception cref="ArgumentOutOfRangeException">The sample is not finite.</exception>
    public double Add(double sample)
    {
        Preconditions.Finite(sample);
        if (Count == 0)
        {
            _filtered = sample;
            _previous = sample;
            Count = 1;
            return R;
        }

        double deviation = sample - _filtered;
        double difference = sample - _previous;
        _v2 = (Lambda2 * deviation * deviation) + ((1 - Lambda2) * _v2);
        _d2 = (Lambda3 * difference * difference) + ((1 - Lambda3) * _d2);
        _filtered = (Lambda1 * sample) + ((1 - Lambda1) * _filtered);
        _previous = sample;
        Count++;
        R = _d2 > 0 ? (2 - Lambda1) * _v2 / _d2 : 0;
        return R;
    }

    /// <summary>Forgets every sample.</summary>
    public void Reset()
    {
        Count = 0;
        _v2 = 0;
        _d2 = 0;
        R = double.NaN;
    }

    private static double Factor(double value, string name)
    {
        if (!(value > 0 && value <= 1))
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a filter factor above 0 and at most 1.");
        }

        return value;
    }
}
