namespace Tieflow.Core.Reconciliation;

/// <summary>How a reconciliation ended.</summary>
public enum ReconciliationStatus
{
    /// <summary>The balances were closed to the tolerance and the measurements adjusted.</summary>
    Reconciled,

    /// <summary>No measurement is redundant: nothing was adjusted and the global test has zero degrees of freedom.</summary>
    NothingRedundant,

    /// <summary>The bilinear iteration did not converge within the iteration limit; no estimate has a value.</summary>
    NotConverged,

    /// <summary>
    /// The data cannot be reconciled within the bounds (flows at or above zero, fractions in [0, 1]): exactly known
    /// values, or exactly known values together with active bounds, leave a balance open. No estimate has a value.
    /// </summary>
    Infeasible,
}
