using Tieflow.Core.Monitoring.Alerts;

namespace Tieflow.Core.Monitoring.Evaluation;

/// <summary>The analysis of one unit judged against the simulator's ground truth.</summary>
/// <param name="Faults">Per injected fault, whether and when it was detected.</param>
/// <param name="FalseAlerts">Alerts that detected no fault and are not excused (see <see cref="TruthEvaluator"/>).</param>
/// <param name="SoftSensorRmseVsTruth">Root mean square difference between the soft sensor and the true final raffinate solute fraction; NaN without overlap.</param>
public sealed record EvaluationResult(IReadOnlyList<FaultDetection> Faults, IReadOnlyList<AlertEpisode> FalseAlerts, double SoftSensorRmseVsTruth)
{
    /// <summary>Stage efficiencies of the steady windows against the true efficiency at the window's end.</summary>
    public EstimateError Efficiency { get; init; } = EstimateError.None;

    /// <summary>Theoretical stages of the steady windows (units with a shared efficiency) against the truth's.</summary>
    public EstimateError TheoreticalStages { get; init; } = EstimateError.None;
}

/// <summary>How far estimates were from the truth.</summary>
/// <param name="Count">Estimates compared.</param>
/// <param name="MaxAbs">Largest absolute error; NaN when none.</param>
/// <param name="Rmse">Root mean square error; NaN when none.</param>
public sealed record EstimateError(int Count, double MaxAbs, double Rmse)
{
    /// <summary>Nothing compared.</summary>
    public static EstimateError None { get; } = new(0, double.NaN, double.NaN);

    /// <summary>The error of a set of (estimate - truth) differences.</summary>
    /// <param name="differences">The differences.</param>
    public static EstimateError Of(IReadOnlyCollection<double> differences)
    {
        ArgumentNullException.ThrowIfNull(differences);
        return differences.Count == 0
            ? None
            : new EstimateError(differences.Count, differences.Max(Math.Abs), Math.Sqrt(differences.Sum(d => d * d) / differences.Count));
    }
}
