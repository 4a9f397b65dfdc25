namespace Tieflow.Core.Monitoring.Records;

/// <summary>
/// An alert raised or cleared (<c>tieflow_alert</c>). Kinds: <c>efficiency-drift</c>, <c>entrainment</c>, <c>solvent-loss</c>,
/// <c>suspect-instrument</c>, <c>signal-quality</c>, <c>off-spec</c>, <c>lab-mismatch</c>.
/// </summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Time of the window or sample that raised or cleared it (UTC).</param>
/// <param name="Kind">The alert kind.</param>
/// <param name="Severity">Its priority.</param>
/// <param name="Stage">The stage it concerns, or null.</param>
/// <param name="Tag">The instrument it concerns, or null.</param>
/// <param name="Active">True when raised, false when cleared.</param>
/// <param name="Message">What a person reads: what was seen, against which threshold.</param>
/// <param name="Evidence">The numbers behind it (value, sigma, threshold, statistic, window length), by name.</param>
public sealed record AlertRecord(
    string Unit,
    DateTimeOffset Time,
    string Kind,
    AlertSeverity Severity,
    int? Stage,
    string? Tag,
    bool Active,
    string Message,
    IReadOnlyDictionary<string, double> Evidence)
    : MonitorRecord(Unit, Time)
{
    /// <inheritdoc />
    public override string Measurement => "tieflow_alert";
}
