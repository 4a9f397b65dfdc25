using Tieflow.Core.Monitoring.Efficiency;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class RaffinateTrendTests
{
    [Fact]
    public void Slope_OfAStraightLine_IsItsSlope_WithTheSigmaOfALeastSquaresLine()
    {
        var trend = new RaffinateTrend(stages: 2, points: 4);
        for (int i = 0; i < 4; i++)
        {
            trend.Add(1, 0.25 + (0.5 * i), 0.08 + (0.002 * (0.25 + (0.5 * i))), 0.001);
        }

        (double slope, double sigma) = trend.Slope(1, 1.75, spanHours: 2)!.Value;

        Assert.Equal(0.002, slope, 12);

        // Equal weights: var(slope) = sigma^2 / sum (t - tmean)^2, with the times 0.25..1.75 h spread +-0.75, +-0.25 h.
        Assert.Equal(0.001 / Math.Sqrt((2 * 0.75 * 0.75) + (2 * 0.25 * 0.25)), sigma, 12);
    }

    [Fact]
    public void Slope_IsUnknown_UntilTheHistoryIsFull_AfterAGap_OrForAnotherTime()
    {
        var trend = new RaffinateTrend(stages: 1, points: 3);
        trend.Add(1, 0, 0.1, 0.001);
        trend.Add(1, 0.5, 0.1, 0.001);
        Assert.Null(trend.Slope(1, 0.5, 1.01));

        trend.Add(1, 1.0, 0.1, 0.001);
        Assert.NotNull(trend.Slope(1, 1.0, 1.01));
        Assert.Null(trend.Slope(1, 1.5, 1.01));

        trend.Add(1, 3.0, 0.1, 0.001);
        Assert.Null(trend.Slope(1, 3.0, 1.01));

        trend.Forget(1);
        Assert.Null(trend.Slope(1, 3.0, 1.01));
    }
}
