namespace Tieflow.Core.Reconciliation;

/// <summary>How one solve of a reconciliation layout ended.</summary>
internal enum SolverOutcome
{
    /// <summary>The balances closed to the tolerance.</summary>
    Converged,

    /// <summary>The iteration limit was reached, or a step was not finite.</summary>
    NotConverged,

    /// <summary>The balances cannot close with the held values: the step stopped with a balance open.</summary>
    Infeasible,
}
