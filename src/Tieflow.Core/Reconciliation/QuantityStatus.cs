namespace Tieflow.Core.Reconciliation;

/// <summary>Classification of a quantity after reconciliation.</summary>
public enum QuantityStatus
{
    /// <summary>Measured and redundant: the balances carry information about it, so it was adjusted and can be tested.</summary>
    Redundant,

    /// <summary>Measured but not redundant: no balance checks it, so it keeps its measured value and cannot be tested.</summary>
    NonRedundant,

    /// <summary>Unmeasured but observable: its value follows from the measurements and the balances.</summary>
    Observable,

    /// <summary>Unmeasured and not observable: the measurements do not determine it, so it gets no value.</summary>
    Unobservable,
}
