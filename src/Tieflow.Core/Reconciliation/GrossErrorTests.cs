using MathNet.Numerics.Distributions;

namespace Tieflow.Core.Reconciliation;

/// <summary>Critical values of the global test and of the measurement test.</summary>
public static class GrossErrorTests
{
    /// <summary>The chi-square quantile at one minus <paramref name="significance"/> for the given degrees of freedom.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Fewer than one degree of freedom, or a significance outside (0, 1).</exception>
    public static double ChiSquareCritical(int degreesOfFreedom, double significance)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(degreesOfFreedom, 1);
        CheckSignificance(significance);
        return ChiSquared.InvCDF(degreesOfFreedom, 1 - significance);
    }

    /// <summary>
    /// Two-sided standard normal critical value for <paramref name="tests"/> simultaneous tests at an overall
    /// <paramref name="significance"/>, with the Sidak correction: each test at 1 - (1 - significance)^(1/tests).
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">Fewer than one test, or a significance outside (0, 1).</exception>
    public static double SidakCritical(int tests, double significance)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(tests, 1);
        CheckSignificance(significance);
        double each = 1 - Math.Pow(1 - significance, 1.0 / tests);
        return Normal.InvCDF(0, 1, 1 - (each / 2));
    }

    private static void CheckSignificance(double significance)
    {
        if (!(significance > 0 && significance < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(significance), significance, "Expected a significance above 0 and below 1.");
        }
    }
}
