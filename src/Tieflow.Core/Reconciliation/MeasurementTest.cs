namespace Tieflow.Core.Reconciliation;

/// <summary>The measurement test of one redundant measurement on its normalised adjustment.</summary>
/// <param name="Key">The measured quantity.</param>
/// <param name="Adjustment">Reconciled minus measured value, in the unit of the reading.</param>
/// <param name="Normalized">Adjustment divided by its standard deviation (absolute value is tested).</param>
/// <param name="Critical">Two-sided standard normal quantile with the Sidak correction for the number of tests.</param>
/// <param name="Suspect">Whether the absolute normalised adjustment exceeds the critical value.</param>
public readonly record struct MeasurementTest(QuantityKey Key, double Adjustment, double Normalized, double Critical, bool Suspect);
