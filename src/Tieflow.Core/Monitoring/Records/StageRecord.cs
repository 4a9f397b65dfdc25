namespace Tieflow.Core.Monitoring.Records;

/// <summary>A stage's state in a window (<c>tieflow_stage</c>). Null members were not determinable in that window.</summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Window time (UTC).</param>
/// <param name="Stage">Stage number, 1-based.</param>
/// <param name="Efficiency">Murphree raffinate efficiency with its sigma, or null.</param>
/// <param name="Entrainment">Carried-over mass fraction in the stage's leaving streams, or null.</param>
/// <param name="TemperatureKelvin">Measured stage temperature, kelvin, or null.</param>
public sealed record StageRecord(string Unit, DateTimeOffset Time, int Stage, EstimatedValue? Efficiency, double? Entrainment, double? TemperatureKelvin)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_stage";
}
