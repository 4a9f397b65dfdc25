using Tieflow.Storage.Outbox;

namespace Tieflow.Service.Store;

/// <summary>What the store is doing, for the status page, the health check and the console.</summary>
/// <param name="Kind">sqlite or influxdb.</param>
/// <param name="Target">The file or the server (never a token).</param>
/// <param name="Written">Records acknowledged by the sink.</param>
/// <param name="LastWrite">Clock time of the last acknowledged batch, or null.</param>
/// <param name="LastError">The last write failure, or null after a success.</param>
/// <param name="PendingRecords">Records in the outbox not yet forwarded (influxdb), else 0.</param>
/// <param name="PendingBytes">Bytes in the outbox (influxdb), else 0.</param>
/// <param name="MaxBytes">The outbox's size limit (influxdb), else 0.</param>
/// <param name="Outbox">The outbox's fill state (influxdb), else null.</param>
/// <param name="Forwarder">The forwarder's state (influxdb), else null.</param>
/// <param name="ForwarderError">The forwarder's last failure, or null.</param>
internal sealed record StoreState(
    string Kind,
    string Target,
    long Written,
    DateTimeOffset? LastWrite,
    string? LastError,
    long PendingRecords,
    long PendingBytes,
    long MaxBytes,
    OutboxState? Outbox,
    ForwarderState? Forwarder,
    string? ForwarderError)
{
    /// <summary>Why the store is behind or filling, or null when it keeps up.</summary>
    public string? Problem =>
        LastError is not null ? $"store write failing: {LastError}"
        : Outbox is OutboxState.Shedding or OutboxState.Overfull ? $"outbox filling: {Outbox.ToString()!.ToLowerInvariant()} at {PendingBytes} of {MaxBytes} bytes"
        : MaxBytes > 0 && PendingBytes > MaxBytes / 2 ? $"outbox filling: {PendingBytes} of {MaxBytes} bytes"
        : Forwarder is ForwarderState.Failing or ForwarderState.CircuitOpen ? $"store behind: InfluxDB not accepting ({ForwarderError ?? Forwarder.ToString()}), {PendingRecords} records held in the outbox"
        : null;
}
