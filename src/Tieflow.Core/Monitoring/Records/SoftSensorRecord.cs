namespace Tieflow.Core.Monitoring.Records;

/// <summary>A soft-sensor value (<c>tieflow_soft_sensor</c>), a fraction on the system's basis.</summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Window time (UTC).</param>
/// <param name="Sensor">The sensor's name (for example <c>raffinate-acetone</c>).</param>
/// <param name="Value">The predicted value, bias included.</param>
/// <param name="Sigma">Its standard deviation.</param>
/// <param name="LabBias">The lab-minus-model bias currently applied.</param>
public sealed record SoftSensorRecord(string Unit, DateTimeOffset Time, string Sensor, double Value, double Sigma, double LabBias)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_soft_sensor";
}
