using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Monitoring.Evaluation;

/// <summary>Whether and when the analysis noticed one injected fault.</summary>
/// <param name="Fault">The fault, from the truth file.</param>
/// <param name="Detected">Raise time of the first matching alert, or null when none matched.</param>
/// <param name="AlertKind">Kind of that alert, or null.</param>
public sealed record FaultDetection(TruthFault Fault, DateTimeOffset? Detected, string? AlertKind)
{
    /// <summary>Raise time minus the fault's start, or null when not detected.</summary>
    public TimeSpan? Delay => Detected is { } d ? d - Fault.Start : null;
}
