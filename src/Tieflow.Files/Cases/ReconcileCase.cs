using Tieflow.Core.Reconciliation;

namespace Tieflow.Files;

/// <summary>A reconcile case: a process network, its measurements, the significance of the gross-error tests and the iteration limit of the bilinear solver.</summary>
public sealed record ReconcileCase(string Path, ProcessNetwork Network, IReadOnlyList<Measurement> Measurements, double Significance, int MaxIterations);
