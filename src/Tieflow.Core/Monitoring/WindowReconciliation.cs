using Tieflow.Core.Monitoring.Efficiency;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>The reconciliation of one window and what follows from it directly.</summary>
/// <param name="Report">The reconciliation, with serial elimination in a steady window.</param>
/// <param name="Efficiencies">Per stage, stage 1 first.</param>
/// <param name="SuspectTags">Tags of the measurements the serial elimination removed, in order.</param>
/// <param name="EnvelopeIterations">Outer iterations that moved the phase-envelope conditions to the estimates.</param>
/// <param name="SaturatedStreams">Streams on which the phase envelope was imposed.</param>
/// <param name="Accumulation">The stages' accumulation held in the balances (empty at steady state).</param>
public sealed record WindowReconciliation(
    ReconciliationReport Report,
    IReadOnlyList<StageEfficiency> Efficiencies,
    IReadOnlyList<string> SuspectTags,
    int EnvelopeIterations,
    IReadOnlyList<string> SaturatedStreams,
    IReadOnlyList<NodeAccumulation> Accumulation)
{
    /// <summary>
    /// The factor applied to the sigmas of <see cref="ReconciliationReport.Final"/>: the Birge ratio of a window that was
    /// not steady and whose adjustments scatter more than its sigmas allow, else 1 (see <see cref="WindowReconciler.Reconcile"/>).
    /// </summary>
    public double SigmaScale { get; init; } = 1;

    /// <summary>Per tag left out of the balances, its reading tested against the estimate from the other instruments.</summary>
    public IReadOnlyList<ExcludedMeasurementTest> ExcludedTests { get; init; } = [];

    /// <summary>Tags asked to be left out but kept in, because their quantities are not observable without them.</summary>
    public IReadOnlyList<string> KeptTags { get; init; } = [];

    /// <summary>The whole unit's rate of gain of one component, in the flow unit (zero at steady state).</summary>
    /// <param name="component">Component id.</param>
    public double TotalAccumulation(string component) => Accumulation.Where(a => a.Component == component).Sum(a => a.Rate);
}
