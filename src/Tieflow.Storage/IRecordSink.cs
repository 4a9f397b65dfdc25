using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Storage;

/// <summary>
/// Where the analysis puts its records. <see cref="WriteAsync"/> returns only once the batch is durably committed
/// (on disk for the embedded store and the outbox, acknowledged by the server for a direct InfluxDB writer): a record
/// whose write returned is acknowledged and must never be lost. Writing the same record again (same measurement, tags
/// and time) overwrites it.
/// </summary>
public interface IRecordSink : IAsyncDisposable
{
    /// <summary>Writes a batch; returns once it is committed. Throws when it could not be, and then nothing of it is acknowledged.</summary>
    Task WriteAsync(IReadOnlyList<MonitorRecord> batch, CancellationToken cancellationToken);

    /// <summary>Brings everything acknowledged as far as this sink takes it (for the outbox: forwarded, if the server answers in time).</summary>
    Task FlushAsync(CancellationToken cancellationToken);
}
