namespace Tieflow.Core.Monitoring.Records;

/// <summary>A reconciled stream (<c>tieflow_stream</c>): flow in kg/h or kmol/h, fractions on the system's basis, each with its sigma.</summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Window time (UTC).</param>
/// <param name="Stream">The stream's record name (<c>feed</c>, <c>raffinate-2</c>, ...).</param>
/// <param name="Flow">Reconciled flow.</param>
/// <param name="Fractions">Reconciled fraction per component id.</param>
public sealed record StreamRecord(string Unit, DateTimeOffset Time, string Stream, EstimatedValue Flow, IReadOnlyDictionary<string, EstimatedValue> Fractions)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_stream";
}
