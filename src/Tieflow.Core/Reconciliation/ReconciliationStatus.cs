namespace Tieflow.Core.Reconciliation;

/// <summary>How a reconciliation ended.</summary>
public enum ReconciliationStatus
{
    /// <summary>The balances were closed to the tolerance and the measurements adjusted.</summary>
    Reconciled,

    /// <summary>No measurement is redundant: nothing was adjusted and the global test has zero degrees of freedom.</summary>
    NothingRedundant,
}
