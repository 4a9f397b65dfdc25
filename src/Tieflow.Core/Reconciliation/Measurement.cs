namespace Tieflow.Core.Reconciliation;

/// <summary>A measured value of one quantity with the standard deviation of its error.</summary>
/// <param name="Key">The quantity measured.</param>
/// <param name="Value">Reading: a flow in the network's flow unit, or a fraction in [0, 1].</param>
/// <param name="Sigma">Standard deviation of the measurement error, in the unit of the reading; above zero.</param>
public readonly record struct Measurement(QuantityKey Key, double Value, double Sigma)
{
    /// <summary>A flow measurement with an absolute standard deviation.</summary>
    public static Measurement Flow(string stream, double value, double sigma) => new(QuantityKey.FlowOf(stream), value, sigma);

    /// <summary>A fraction measurement with an absolute standard deviation.</summary>
    public static Measurement Fraction(string stream, string component, double value, double sigma) =>
        new(QuantityKey.FractionOf(stream, component), value, sigma);

    /// <summary>
    /// A measurement whose standard deviation is a fraction of the reading (for example 0.02 for 2 %),
    /// never below <paramref name="minimumSigma"/> so that a reading near zero keeps a usable weight.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The relative sigma is not above zero, or the floor is negative.</exception>
    public static Measurement WithRelativeSigma(QuantityKey key, double value, double relativeSigma, double minimumSigma = 0)
    {
        Preconditions.Positive(relativeSigma);
        Preconditions.NonNegative(minimumSigma);
        Preconditions.Finite(value);
        return new Measurement(key, value, Math.Max(Math.Abs(value) * relativeSigma, minimumSigma));
    }
}
