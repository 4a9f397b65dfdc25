namespace Tieflow.Core.Scenarios;

/// <summary>The ground truth of one simulated unit.</summary>
/// <param name="Faults">The faults injected, with absolute times.</param>
/// <param name="Samples">The true state at regular intervals, in time order.</param>
public sealed record UnitTruth(IReadOnlyList<TruthFault> Faults, IReadOnlyList<TruthSample> Samples);
