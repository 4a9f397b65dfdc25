namespace Tieflow.Core.Monitoring.Records;

/// <summary>
/// What the per-unit analysis writes to a time-series store. Every record belongs to one unit and carries the source
/// time of the window or sample it describes (UTC), so that writing it again after a crash overwrites rather than
/// duplicates. The site is added by the store from the plant description.
/// </summary>
/// <param name="Unit">The unit's id.</param>
/// <param name="Time">Source time of the window or sample described (UTC).</param>
public abstract record MonitorRecord(string Unit, DateTimeOffset Time)
{
    /// <summary>The measurement name in the store (<c>tieflow_stream</c>, <c>tieflow_stage</c>, ...).</summary>
    public abstract string Measurement { get; }

    /// <summary>True for records a store may drop first when it must (signal samples); analysis records and alerts are never dropped.</summary>
    public virtual bool IsExpendable => false;
}
