namespace Tieflow.Core.Reconciliation;

/// <summary>The reconciled or estimated value of one quantity, with its standard deviation.</summary>
/// <param name="Key">The quantity.</param>
/// <param name="Value">Reconciled (measured) or estimated (unmeasured) value; <see cref="double.NaN"/> when unobservable.</param>
/// <param name="Sigma">Standard deviation from the linearised covariance; <see cref="double.NaN"/> when unobservable.</param>
/// <param name="Measured">The reading, or <see langword="null"/> for an unmeasured quantity.</param>
/// <param name="Status">Classification: redundant, non-redundant, observable or unobservable.</param>
public readonly record struct QuantityEstimate(QuantityKey Key, double Value, double Sigma, double? Measured, QuantityStatus Status)
{
    /// <summary>Whether the quantity got a value (everything but <see cref="QuantityStatus.Unobservable"/>).</summary>
    public bool HasValue => Status != QuantityStatus.Unobservable;

    /// <summary>Whether the estimate is held at a bound (a flow at zero, a fraction at zero or one); its sigma is then zero.</summary>
    public bool AtBound { get; init; }
}
