namespace Tieflow.Core.Monitoring.Records;

/// <summary>A validated signal sample (<c>tieflow_signal</c>), written only when signals are to be stored.</summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Source time (UTC).</param>
/// <param name="Tag">The instrument's tag.</param>
/// <param name="Value">The reading, in the tag's engineering unit.</param>
/// <param name="Quality">The quality after the signal checks.</param>
public sealed record SignalRecord(string Unit, DateTimeOffset Time, string Tag, double Value, SignalQuality Quality)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_signal";

    /// <inheritdoc />
    public override bool IsExpendable => true;
}
