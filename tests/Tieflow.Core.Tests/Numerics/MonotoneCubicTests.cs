using Tieflow.Core.Numerics;

namespace Tieflow.Core.Tests.Numerics;

public sealed class MonotoneCubicTests
{
    // Random strictly monotone data on random ascending nodes, rising or falling.
    private static MonotoneCubic RandomCurve(Random random, int nodes, bool rising)
    {
        var x = new double[nodes];
        var y = new double[nodes];
        for (int i = 1; i < nodes; i++)
        {
            x[i] = x[i - 1] + 0.01 + random.NextDouble();
            y[i] = y[i - 1] + ((rising ? 1 : -1) * (1e-6 + (random.NextDouble() * random.NextDouble())));
        }

        return new MonotoneCubic(x, y);
    }

    [Theory]
    [InlineData(1, true)]
    [InlineData(2, false)]
    [InlineData(3, true)]
    [InlineData(4, false)]
    public void FirstCrossing_RandomMonotoneData_HitsTheTargetAndAgreesWithBisection(int seed, bool rising)
    {
        var random = new Random(seed);
        for (int curve = 0; curve < 20; curve++)
        {
            MonotoneCubic cubic = RandomCurve(random, 3 + random.Next(10), rising);
            double low = Math.Min(cubic.NodeValue(0, 0), cubic.NodeValue(0, cubic.Count - 1));
            double high = Math.Max(cubic.NodeValue(0, 0), cubic.NodeValue(0, cubic.Count - 1));
            for (int sample = 0; sample < 50; sample++)
            {
                double target = low + ((high - low) * random.NextDouble());
                double t = cubic.FirstCrossing(0, target);
                Assert.InRange(t, cubic.First, cubic.Last);
                Assert.True(Math.Abs(cubic.Value(0, t) - target) <= 1e-14 * Math.Max(1, Math.Abs(target)), $"curve {curve}: value {cubic.Value(0, t):R} at {t:R}, target {target:R}");
                double reference = Bisect(cubic, target);
                Assert.True(Math.Abs(t - reference) <= 1e-12 * Math.Max(1, Math.Abs(reference)), $"curve {curve}: {t:R} against bisection {reference:R}");
            }
        }
    }

    [Fact]
    public void FirstCrossing_AtNodesAndOutsideTheRange_GivesTheNodeOrNaN()
    {
        var cubic = new MonotoneCubic([0, 1, 3], [0, 2, 5]);
        Assert.Equal(1, cubic.FirstCrossing(0, 2));
        Assert.Equal(3, cubic.FirstCrossing(0, 5));
        Assert.Equal(0, cubic.FirstCrossing(0, 0));
        Assert.True(double.IsNaN(cubic.FirstCrossing(0, 5.5)));
        Assert.True(double.IsNaN(cubic.FirstCrossing(0, -0.1)));
    }

    // Plain bisection over the whole node range: the reference the faster inversion is checked against.
    private static double Bisect(MonotoneCubic cubic, double target)
    {
        double lo = cubic.First, hi = cubic.Last;
        bool rising = cubic.NodeValue(0, cubic.Count - 1) > cubic.NodeValue(0, 0);
        for (int i = 0; i < 200; i++)
        {
            double mid = 0.5 * (lo + hi);
            if ((cubic.Value(0, mid) < target) == rising)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return 0.5 * (lo + hi);
    }
}
