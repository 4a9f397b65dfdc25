using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Storage.Outbox;

/// <summary>The record sink of the InfluxDB store kind: a write is acknowledged once the outbox committed it; the forwarder takes it from there.</summary>
public sealed class OutboxSink(Outbox outbox) : IRecordSink
{
    /// <inheritdoc />
    public Task WriteAsync(IReadOnlyList<MonitorRecord> batch, CancellationToken cancellationToken)
    {
        cancellationToken.ThrowIfCancellationRequested();
        outbox.Append(batch);
        return Task.CompletedTask;
    }

    /// <summary>Waits until the forwarder has emptied the outbox, or the token is cancelled (what is left stays in the file for the next start).</summary>
    public Task FlushAsync(CancellationToken cancellationToken) => outbox.WaitUntilEmptyAsync(cancellationToken);

    /// <inheritdoc />
    public ValueTask DisposeAsync() => ValueTask.CompletedTask;
}
