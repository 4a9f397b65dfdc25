namespace Tieflow.Core.Monitoring.Efficiency;

/// <summary>A stage's Murphree raffinate efficiency in one window.</summary>
/// <param name="Stage">1-based stage.</param>
/// <param name="Status">Whether it could be said.</param>
/// <param name="Value">E = (x_in - x_out) / (x_in - x*); NaN unless <see cref="EfficiencyStatus.Determined"/>.</param>
/// <param name="Sigma">Its standard deviation by the delta method; NaN when not observable.</param>
/// <param name="DrivingForce">x_in - x*, the denominator (solute fraction on the system's basis).</param>
public sealed record StageEfficiency(int Stage, EfficiencyStatus Status, double Value, double Sigma, double DrivingForce)
{
    /// <summary>A stage whose streams are not observable.</summary>
    /// <param name="stage">1-based stage.</param>
    public static StageEfficiency NotObservable(int stage) => new(stage, EfficiencyStatus.NotObservable, double.NaN, double.NaN, double.NaN);
}
