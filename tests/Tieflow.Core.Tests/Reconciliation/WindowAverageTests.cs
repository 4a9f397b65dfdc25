using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class WindowAverageTests
{
    [Fact]
    public void Summarize_Samples_MatchesMathNetStatistics()
    {
        // Reference: MathNet.Numerics.Statistics (a general-purpose library), sample standard deviation.
        double[] x = [10.2, 9.8, 10.5, 10.1, 9.9, 10.0];
        WindowSummary s = WindowAverage.Summarize(x);
        Assert.Equal(6, s.Count);
        Assert.True(Math.Abs(s.Mean - MathNet.Numerics.Statistics.Statistics.Mean(x)) < 1e-12);
        Assert.True(Math.Abs(s.StandardDeviation - MathNet.Numerics.Statistics.Statistics.StandardDeviation(x)) < 1e-12);
        Assert.True(Math.Abs(s.StandardErrorOfMean - (s.StandardDeviation / Math.Sqrt(6))) < 1e-15);
        Assert.True(Math.Abs(s.Minimum - 9.8) < 1e-15 && Math.Abs(s.Maximum - 10.5) < 1e-15);
    }

    [Fact]
    public void Summarize_TimedSamples_UsesOnlyTheWindow()
    {
        var t0 = new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);
        DateTimeOffset[] times = [t0, t0.AddMinutes(10), t0.AddMinutes(20), t0.AddMinutes(30)];
        double[] values = [100, 1, 2, 3];
        WindowSummary s = WindowAverage.Summarize(times, values, t0.AddMinutes(30), TimeSpan.FromMinutes(30));
        Assert.Equal(3, s.Count);
        Assert.True(Math.Abs(s.Mean - 2) < 1e-12);
    }

    [Fact]
    public void Summarize_OneSample_HasZeroSpread()
    {
        WindowSummary s = WindowAverage.Summarize([4.0]);
        Assert.True(Math.Abs(s.StandardDeviation) < 1e-300);
    }

    [Fact]
    public void Summarize_EmptyOrNaN_Throws()
    {
        Assert.Throws<ArgumentException>(() => WindowAverage.Summarize([]));
        ArgumentException e = Assert.Throws<ArgumentException>(() => WindowAverage.Summarize([1.0, double.NaN]));
        Assert.Contains("Sample 1", e.Message, StringComparison.Ordinal);
    }
}
