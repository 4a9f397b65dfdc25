namespace Tieflow.Core.Reconciliation;

/// <summary>A reconciliation with serial elimination of gross errors.</summary>
/// <param name="Initial">The reconciliation with every measurement: its global and measurement tests are the ones to report.</param>
/// <param name="Final">The reconciliation after the suspects were removed (the same as <paramref name="Initial"/> when there is none):
/// the best estimates, with every suspect estimated from the balances where it is observable.</param>
/// <param name="Suspects">Measurements removed, most suspect first; empty when the global test passed with every measurement.</param>
public sealed record ReconciliationReport(ReconciliationResult Initial, ReconciliationResult Final, IReadOnlyList<QuantityKey> Suspects);
