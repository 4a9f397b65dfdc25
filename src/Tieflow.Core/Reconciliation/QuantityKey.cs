namespace Tieflow.Core.Reconciliation;

/// <summary>Names one quantity of a network: the flow of a stream or the fraction of a component in it.</summary>
/// <param name="Stream">Stream identifier.</param>
/// <param name="Quantity">Flow or fraction.</param>
/// <param name="Component">Component identifier for a fraction; <see langword="null"/> for a flow.</param>
public readonly record struct QuantityKey(string Stream, MeasuredQuantity Quantity, string? Component)
{
    /// <summary>The total flow of a stream.</summary>
    public static QuantityKey FlowOf(string stream) => new(stream, MeasuredQuantity.Flow, null);

    /// <summary>The fraction of a component in a stream.</summary>
    public static QuantityKey FractionOf(string stream, string component) => new(stream, MeasuredQuantity.Fraction, component);

    /// <summary>Readable form, for example <c>S1 flow</c> or <c>S1 fraction of a</c>.</summary>
    public override string ToString() =>
        Quantity == MeasuredQuantity.Flow ? $"{Stream} flow" : $"{Stream} fraction of {Component}";
}
