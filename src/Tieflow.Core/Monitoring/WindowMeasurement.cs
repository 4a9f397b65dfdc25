using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>A window's average of one instrument, in base units (kg/h or kmol/h, fractions), with the sigma of that average.</summary>
/// <param name="Tag">The instrument's tag.</param>
/// <param name="Key">The network quantity it measures.</param>
/// <param name="Value">The average, base unit.</param>
/// <param name="Sigma">Standard deviation of the average, base unit.</param>
/// <param name="Count">Readings (or analyzer updates) averaged.</param>
public sealed record WindowMeasurement(string Tag, QuantityKey Key, double Value, double Sigma, int Count);
