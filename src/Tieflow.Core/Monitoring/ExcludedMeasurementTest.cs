using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// The test of a measurement left out of a window's balances: its reading against the estimate of the same quantity that
/// the other instruments give (the measurement test of a deleted measurement).
/// </summary>
/// <param name="Tag">The instrument's tag.</param>
/// <param name="Key">The quantity it measures.</param>
/// <param name="Measured">Its window average, base unit.</param>
/// <param name="Estimate">The reconciled estimate without it, base unit.</param>
/// <param name="Sigma">Standard deviation of the difference (reading and estimate together), base unit.</param>
/// <param name="Normalized">(Measured - Estimate) / Sigma.</param>
/// <param name="Critical">Two-sided standard normal critical value, Sidak-corrected over the window's excluded tags.</param>
public readonly record struct ExcludedMeasurementTest(string Tag, QuantityKey Key, double Measured, double Estimate, double Sigma, double Normalized, double Critical)
{
    /// <summary>Whether the reading still disagrees with the balances.</summary>
    public bool Disagrees => !(Math.Abs(Normalized) <= Critical);
}
