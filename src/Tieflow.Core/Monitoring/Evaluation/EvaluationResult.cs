using Tieflow.Core.Monitoring.Alerts;

namespace Tieflow.Core.Monitoring.Evaluation;

/// <summary>The analysis of one unit judged against the simulator's ground truth.</summary>
/// <param name="Faults">Per injected fault, whether and when it was detected.</param>
/// <param name="FalseAlerts">Alerts that detected no fault and are not excused (see <see cref="TruthEvaluator"/>).</param>
/// <param name="SoftSensorRmseVsTruth">Root mean square difference between the soft sensor and the true final raffinate solute fraction; NaN without overlap.</param>
public sealed record EvaluationResult(IReadOnlyList<FaultDetection> Faults, IReadOnlyList<AlertEpisode> FalseAlerts, double SoftSensorRmseVsTruth);
