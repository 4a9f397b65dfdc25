using Tieflow.Core.Numerics;

namespace Tieflow.Core.Tests.Numerics;

/// <summary>Invariants of the scan-then-Brent root finder and the golden-section search (exact mathematics).</summary>
public sealed class RootBracketingAndGoldenSectionTests
{
    [Theory]
    [InlineData(0.0, 4.0, 1.0)]
    [InlineData(4.0, 0.0, 3.0)]
    public void TryScan_SeveralRoots_FindsTheOneNearestTheStart(double from, double to, double expected)
    {
        // (x - 1)(x - 2)(x - 3) has roots 1, 2, 3.
        Assert.True(RootBracketing.TryScan(static (x, _) => (x - 1) * (x - 2) * (x - 3), 0, from, to, 40, 1e-14, 100, out double root, out _));
        Assert.Equal(expected, root, 1e-12);
    }

    [Fact]
    public void TryScan_RejectedRoot_GoesOnToTheNext()
    {
        Assert.True(RootBracketing.TryScan(static (x, _) => (x - 1) * (x - 2) * (x - 3), 0, 0.0, 4.0, 40, 1e-14, 100, out double root, out _, accept: r => r > 1.5));
        Assert.Equal(2, root, 1e-12);
        Assert.False(RootBracketing.TryScan(static (x, _) => (x * x) + 1, 0, -2.0, 2.0, 40, 1e-14, 100, out double none, out _));
        Assert.True(double.IsNaN(none));
    }

    [Fact]
    public void Minimize_StaysWithinItsLimits_AndFindsTheMinimum()
    {
        double x = GoldenSectionMinimizer.Minimize(static v => (v - 0.3) * (v - 0.3), 0, 1, 1e-10, 200, out double f);
        Assert.Equal(0.3, x, 1e-8);
        Assert.True(f < 1e-15);

        // A minimum outside the limits: the nearest limit, never beyond it.
        double edge = GoldenSectionMinimizer.Minimize(static v => v, 2, 5, 1e-10, 200, out _);
        Assert.InRange(edge, 2, 2 + 1e-9);
    }

    [Fact]
    public void Minimize_StopAtOrBelow_StopsEarly()
    {
        int calls = 0;
        GoldenSectionMinimizer.Minimize(v => { calls++; return (v - 0.5) * (v - 0.5) - 0.01; }, 0, 1, 1e-12, 200, out double f, stopAtOrBelow: 0);
        Assert.True(f <= 0);
        Assert.True(calls < 10);
    }
}
