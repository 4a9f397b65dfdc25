namespace Tieflow.Core.Monitoring.Records;

/// <summary>An estimate with its standard deviation (both in the same unit).</summary>
/// <param name="Value">The estimate.</param>
/// <param name="Sigma">Its standard deviation, zero or positive.</param>
public readonly record struct EstimatedValue(double Value, double Sigma);
