using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class CaoRhinehartFilterTests
{
    // Deterministic check of docs/reference-data.md §6 (Cao and Rhinehart, J. Process Control 5(6), 363, 1995,
    // filter equations; the R values are the computed figures of that section), factors 0.2, 0.1, 0.1.
    [Fact]
    public void Add_ReferenceSequence_GivesReferenceR()
    {
        double[] x = [1.0, 1.2, 0.9, 1.1, 1.0, 1.3, 0.8, 1.0, 1.2, 0.9];
        double[] expected = [1.8, 0.79429, 0.67804, 0.64290, 0.99933, 0.75589, 0.69023, 0.76201, 0.70979];
        var filter = new CaoRhinehartFilter(0.2, 0.1, 0.1);
        Assert.True(double.IsNaN(filter.Add(x[0])));
        for (int i = 1; i < x.Length; i++)
        {
            double r = filter.Add(x[i]);
            Assert.True(Math.Abs(r - expected[i - 1]) < 1e-5, $"R_{i} = {r}");
        }
    }

    // Null-distribution percentiles of R for white noise (docs/reference-data.md §6, Monte Carlo, plus or
    // minus 0.01): P95 1.439 for 0.2/0.1/0.1 and 1.317 for 0.1/0.05/0.05. Seeded, 200,000 samples after warm-up.
    [Theory]
    [InlineData(0.2, 0.1, 0.1, 1.439)]
    [InlineData(0.1, 0.05, 0.05, 1.317)]
    public void Add_WhiteNoise_NinetyFifthPercentileMatchesReference(double l1, double l2, double l3, double p95)
    {
        var filter = new CaoRhinehartFilter(l1, l2, l3);
        var random = new Random(5);
        const int Samples = 200_000;
        var r = new double[Samples];
        for (int i = 0; i < 1000; i++)
        {
            filter.Add(TestNetworks.Gaussian(random));
        }

        for (int i = 0; i < Samples; i++)
        {
            r[i] = filter.Add(TestNetworks.Gaussian(random));
        }

        Array.Sort(r);
        Assert.True(Math.Abs(r[(int)(0.95 * Samples)] - p95) < 0.02, $"P95 {r[(int)(0.95 * Samples)]}");
    }

    [Fact]
    public void IsSteady_RampAfterNoise_TurnsFalse()
    {
        var filter = new CaoRhinehartFilter();
        var random = new Random(6);
        for (int i = 0; i < 200; i++)
        {
            filter.Add(100 + (0.5 * TestNetworks.Gaussian(random)));
        }

        int steadyBefore = filter.IsSteady ? 1 : 0;
        for (int i = 0; i < 50; i++)
        {
            filter.Add(100 + (0.5 * i) + (0.5 * TestNetworks.Gaussian(random)));
        }

        Assert.False(filter.IsSteady, $"R = {filter.R}");
        Assert.InRange(steadyBefore, 0, 1);
    }

    [Fact]
    public void IsSteady_DuringWarmUp_IsFalse()
    {
        var filter = new CaoRhinehartFilter(warmUpSamples: 5);
        for (int i = 0; i < 5; i++)
        {
            filter.Add(1.0);
            Assert.False(filter.IsSteady);
        }

        filter.Add(1.0);
        Assert.True(filter.IsSteady);
    }

    [Theory]
    [InlineData(0, 0.1, 0.1, 1.44)]
    [InlineData(0.2, 1.5, 0.1, 1.44)]
    [InlineData(0.2, 0.1, double.NaN, 1.44)]
    [InlineData(0.2, 0.1, 0.1, 0)]
    public void Constructor_BadSettings_Throw(double l1, double l2, double l3, double critical)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new CaoRhinehartFilter(l1, l2, l3, critical));
    }
}
