namespace Tieflow.Core.Reconciliation;

/// <summary>Reconciliation with serial elimination: the entry point for a one-off reconciliation of a set of measurements.</summary>
public static class DataReconciler
{
    /// <summary>
    /// Reconciles the measurements and, while the global test fails, removes the measurement with the largest absolute
    /// normalised adjustment and reconciles again, until the test passes or nothing redundant is left.
    /// </summary>
    /// <param name="network">The network.</param>
    /// <param name="measurements">The measurements (see <see cref="ReconciliationProblem.Create(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?)"/> for the rules).</param>
    /// <param name="options">Settings; the defaults when <see langword="null"/>.</param>
    /// <exception cref="ArgumentException">A measurement is invalid; the message names it.</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge.</exception>
    public static ReconciliationReport Reconcile(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions? options = null)
        => Reconcile(network, measurements, options, null);

    /// <summary>As <see cref="Reconcile(ProcessNetwork, IReadOnlyList{Measurement}, ReconciliationOptions?)"/>, for a unit
    /// whose hold-ups gain or lose inventory at known rates (<see cref="NodeAccumulation"/>).</summary>
    /// <param name="network">The network.</param>
    /// <param name="measurements">The measurements.</param>
    /// <param name="options">Settings; the defaults when <see langword="null"/>.</param>
    /// <param name="accumulation">Known rates of accumulation; <see langword="null"/> for steady state.</param>
    /// <exception cref="ArgumentException">A measurement or an accumulation is invalid; the message names it.</exception>
    /// <exception cref="ReconciliationException">The bilinear iteration did not converge.</exception>
    public static ReconciliationReport Reconcile(ProcessNetwork network, IReadOnlyList<Measurement> measurements, ReconciliationOptions? options, IReadOnlyList<NodeAccumulation>? accumulation) =>
        new SerialEliminationReconciler(network, options).Reconcile(measurements, accumulation);
}
