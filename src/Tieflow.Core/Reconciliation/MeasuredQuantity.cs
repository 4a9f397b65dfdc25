namespace Tieflow.Core.Reconciliation;

/// <summary>What a measurement or an estimate of a stream is about.</summary>
public enum MeasuredQuantity
{
    /// <summary>Total flow of the stream (kg/h on a mass basis, kmol/h on a mole basis).</summary>
    Flow,

    /// <summary>Fraction of one component in the stream, in [0, 1].</summary>
    Fraction,
}
