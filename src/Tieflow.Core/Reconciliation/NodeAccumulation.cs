namespace Tieflow.Core.Reconciliation;

/// <summary>
/// The rate at which a node's hold-up gains a component (its inventory's time derivative), a known term of the node's
/// balance: inflow - outflow = accumulation. A unit that is not at steady state keeps its balances with this term;
/// without it a slowly settling unit reads as a balance error. The rate is taken as known: its uncertainty is not
/// propagated.
/// </summary>
/// <param name="Node">The node's id.</param>
/// <param name="Component">The component whose inventory changes; <see langword="null"/> on a flow-only network (the total).</param>
/// <param name="Rate">Rate of gain in the network's flow unit (per hour for kg/h flows); negative for a loss.</param>
public readonly record struct NodeAccumulation(string Node, string? Component, double Rate);
