using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Influx;

/// <summary>
/// Writes records straight to InfluxDB, batch by batch, returning once the server accepted them. Without an outbox in
/// front a server outage fails the write; the service puts <see cref="Outbox.OutboxSink"/> in front for that.
/// </summary>
public sealed class InfluxRecordSink(IInfluxLineWriter writer, string site, int batchSize = 5000) : IRecordSink
{
    /// <inheritdoc />
    public async Task WriteAsync(IReadOnlyList<MonitorRecord> batch, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(batch);
        var lines = new List<string>(Math.Min(batch.Count, batchSize));
        foreach (MonitorRecord record in batch)
        {
            if (RecordPoints.ToPoint(record, site) is { } p)
            {
                lines.Add(p.ToLine());
            }

            if (lines.Count == batchSize)
            {
                await writer.WriteAsync(lines, cancellationToken).ConfigureAwait(false);
                lines = new List<string>(batchSize);
            }
        }

        await writer.WriteAsync(lines, cancellationToken).ConfigureAwait(false);
    }

    /// <inheritdoc />
    public Task FlushAsync(CancellationToken cancellationToken) => Task.CompletedTask;

    /// <inheritdoc />
    public ValueTask DisposeAsync() => ValueTask.CompletedTask;
}
