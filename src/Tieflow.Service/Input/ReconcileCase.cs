using Tieflow.Core.Reconciliation;

namespace Tieflow.Service.Input;

/// <summary>A reconcile case: a process network, its measurements and the significance of the gross-error tests.</summary>
internal sealed record ReconcileCase(string Path, ProcessNetwork Network, IReadOnlyList<Measurement> Measurements, double Significance);
