namespace Tieflow.Core.Reconciliation;

/// <summary>The outcome of one reconciliation.</summary>
/// <param name="Network">The network reconciled.</param>
/// <param name="Status">Reconciled, or nothing redundant (nothing adjusted, zero degrees of freedom); from
/// <see cref="ReconciliationProblem.TryReconcile"/> also not converged or infeasible, with <see cref="Message"/>.</param>
/// <param name="Estimates">One estimate per quantity of the network, in network order (see <see cref="ProcessNetwork.IndexOf"/>).</param>
/// <param name="GlobalTest">The chi-square test on the weighted sum of squared adjustments.</param>
/// <param name="MeasurementTests">Measurement tests of the redundant measurements, in measurement order.</param>
/// <param name="Iterations">Linearisation steps taken (one for a flow-only network).</param>
/// <param name="BalanceResidual">Largest balance residual at the solution, relative to the sum of the absolute terms of its balance.</param>
public sealed record ReconciliationResult(
    ProcessNetwork Network,
    ReconciliationStatus Status,
    IReadOnlyList<QuantityEstimate> Estimates,
    GlobalTest GlobalTest,
    IReadOnlyList<MeasurementTest> MeasurementTests,
    int Iterations,
    double BalanceResidual)
{
    /// <summary>Whether the data were reconciled (<see cref="ReconciliationStatus.Reconciled"/> or <see cref="ReconciliationStatus.NothingRedundant"/>).</summary>
    public bool Succeeded => Status is ReconciliationStatus.Reconciled or ReconciliationStatus.NothingRedundant;

    /// <summary>Why the data could not be reconciled and what to change; <see langword="null"/> when they were.</summary>
    public string? Message { get; init; }

    /// <summary>
    /// Quantities held at a bound at the solution (a flow at zero, a fraction at zero or one), in network order: the
    /// optimum without bounds lay beyond them. Empty when no bound is active.
    /// </summary>
    public IReadOnlyList<QuantityKey> ActiveBounds { get; init; } = [];

    /// <summary>The estimate of a quantity.</summary>
    /// <exception cref="KeyNotFoundException">The network has no such quantity.</exception>
    public QuantityEstimate this[QuantityKey key]
    {
        get
        {
            int index = Network.IndexOf(key);
            return index >= 0 ? Estimates[index] : throw new KeyNotFoundException($"The network has no quantity '{key}'.");
        }
    }

    /// <summary>The estimate of the total flow of a stream.</summary>
    public QuantityEstimate Flow(string stream) => this[QuantityKey.FlowOf(stream)];

    /// <summary>The estimate of the fraction of a component in a stream.</summary>
    public QuantityEstimate Fraction(string stream, string component) => this[QuantityKey.FractionOf(stream, component)];

    /// <summary>The measurement test of a measured quantity, or <see langword="null"/> when it is not redundant or not measured.</summary>
    public MeasurementTest? TestOf(QuantityKey key)
    {
        foreach (MeasurementTest t in MeasurementTests)
        {
            if (t.Key == key)
            {
                return t;
            }
        }

        return null;
    }
}
