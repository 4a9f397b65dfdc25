namespace Tieflow.Core.Monitoring.Signals;

/// <summary>Settings of the per-tag signal checks. Defaults are common practice, no source, tuned on the demo scenarios.</summary>
public sealed record SignalCheckSettings
{
    /// <summary>A tag is stale after this many update intervals without a new value (continuous instruments: <see cref="ContinuousUpdateInterval"/>).</summary>
    public double StaleIntervals { get; init; } = 3;

    /// <summary>Expected time between readings of a continuous instrument (flow meters, thermometers).</summary>
    public TimeSpan ContinuousUpdateInterval { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>Number of recent values of a continuous instrument in the frozen and spike tests.</summary>
    public int ContinuousHistory { get; init; } = 60;

    /// <summary>Number of recent updates of an analyzer in the frozen and spike tests.</summary>
    public int AnalyzerHistory { get; init; } = 6;

    /// <summary>
    /// Lower-tail probability of the chi-square variance test below which a signal counts as frozen: (n-1) s^2 / sigma^2
    /// below the quantile of this probability. Very small, because the test is made at every reading of every tag over
    /// overlapping stretches: at 1e-6 a healthy thermometer of the demo (sigma 0.2 K, a reading a second) was called
    /// frozen once in three simulated two-day runs (60 readings with a spread of 0.59 sigma). At 1e-12 the spread must
    /// fall below 0.43 sigma (60 readings); a frozen signal has none.
    /// </summary>
    public double FrozenProbability { get; init; } = 1e-12;

    /// <summary>Robust z-score (median and scaled median absolute deviation) above which a reading is a spike.</summary>
    public double SpikeZ { get; init; } = 8;

    /// <summary>A spike must also lie this many sigmas of the instrument from the median, so that a very quiet stretch does not flag ordinary noise.</summary>
    public double SpikeSigmas { get; init; } = 6;
}
