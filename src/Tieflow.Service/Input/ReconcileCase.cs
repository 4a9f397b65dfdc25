using Tieflow.Core.Reconciliation;

namespace Tieflow.Service.Input;

/// <summary>A reconcile case: a process network, its measurements, the significance of the gross-error tests and the iteration limit of the bilinear solver.</summary>
internal sealed record ReconcileCase(string Path, ProcessNetwork Network, IReadOnlyList<Measurement> Measurements, double Significance, int MaxIterations);
