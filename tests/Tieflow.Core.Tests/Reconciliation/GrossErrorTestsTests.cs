using MathNet.Numerics.Distributions;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class GrossErrorTestsTests
{
    // Printed upper critical values of the chi-square distribution: NIST/SEMATECH e-Handbook of Statistical Methods,
    // section 1.3.6.7.4 "Critical Values of the Chi-Square Distribution" (section number from memory; the same
    // figures as the chi-square table of any standard statistics text), three decimals.
    [Theory]
    [InlineData(1, 0.05, 3.841)]
    [InlineData(4, 0.05, 9.488)]
    [InlineData(10, 0.05, 18.307)]
    [InlineData(1, 0.01, 6.635)]
    [InlineData(5, 0.01, 15.086)]
    [InlineData(20, 0.10, 28.412)]
    public void ChiSquareCritical_PrintedTable_AgreesToThreeDecimals(int dof, double significance, double printed)
    {
        Assert.True(Math.Abs(GrossErrorTests.ChiSquareCritical(dof, significance) - printed) < 6e-4);
    }

    [Theory]
    [InlineData(1, 0.05)]
    [InlineData(7, 0.05)]
    [InlineData(33, 0.01)]
    public void ChiSquareCritical_IsTheQuantileOfMathNetDistribution(int dof, double significance)
    {
        // MathNet.Numerics (general-purpose reference library): the CDF at the critical value is 1 - significance.
        double critical = GrossErrorTests.ChiSquareCritical(dof, significance);
        Assert.True(Math.Abs(ChiSquared.CDF(dof, critical) - (1 - significance)) < 1e-10);
    }

    [Theory]
    [InlineData(1, 0.05, 1.960)] // standard normal table, two-sided 5 % (common statistics tables)
    [InlineData(6, 0.05, 2.631)] // Sidak-corrected value for six tests, docs/reference-data.md §4
    public void SidakCritical_KnownValues(int tests, double significance, double expected)
    {
        Assert.True(Math.Abs(GrossErrorTests.SidakCritical(tests, significance) - expected) < 1e-3);
    }

    [Theory]
    [InlineData(0, 0.05)]
    [InlineData(1, 0)]
    [InlineData(1, 1)]
    [InlineData(1, double.NaN)]
    public void ChiSquareCritical_BadArguments_Throw(int dof, double significance)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => GrossErrorTests.ChiSquareCritical(dof, significance));
    }
}
