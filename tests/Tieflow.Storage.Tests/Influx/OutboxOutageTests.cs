using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Points;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Storage.Tests.Influx;

/// <summary>The outbox in front of a real victoria-metrics that is stopped while records are written and started again.</summary>
public sealed class OutboxOutageTests : IDisposable
{
    private const int Count = 20_000; // CI size
    private static readonly TimeSpan Generous = TimeSpan.FromSeconds(120);
    private readonly VictoriaMetricsServer _server = new();
    private readonly TempFolder _folder = new();

    public void Dispose()
    {
        _server.Dispose();
        _folder.Dispose();
    }

    [Fact]
    public async Task Every_acknowledged_record_arrives_exactly_once_across_a_server_outage()
    {
        List<MonitorRecord> records = Records.Mixed(Count, seed: 11);
        var acknowledged = new List<MonitorRecord>();
        using var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = _server.Url, Org = "tieflow", Bucket = "tieflow", Timeout = TimeSpan.FromSeconds(5) });
        var options = new OutboxForwarderOptions
        {
            BatchSize = 1000,
            RetryAttempts = 2,
            RetryDelay = TimeSpan.FromMilliseconds(50),
            BreakDuration = TimeSpan.FromMilliseconds(500),
            PauseAfterFailure = TimeSpan.FromMilliseconds(100),
            IdlePoll = TimeSpan.FromMilliseconds(100),
        };
        var sawOutage = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        var sawRecovery = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        using var stop = new CancellationTokenSource();

        using (var outbox = new StoreOutbox(new OutboxOptions { Path = _folder.File("outbox.db"), Site = Records.Site }))
        {
            var forwarder = new OutboxForwarder(outbox, writer, options, TimeProvider.System);
            forwarder.StateChanged += s =>
            {
                if (s is ForwarderState.Failing or ForwarderState.CircuitOpen)
                {
                    sawOutage.TrySetResult();
                }
                else if (s == ForwarderState.Forwarding && sawOutage.Task.IsCompleted)
                {
                    sawRecovery.TrySetResult();
                }
            };
            await using var sink = new OutboxSink(outbox);
            Task run = forwarder.RunAsync(stop.Token);
            MonitorRecord[][] chunks = records.Chunk(100).ToArray();
            for (int i = 0; i < chunks.Length; i++)
            {
                if (i == chunks.Length / 4)
                {
                    _server.Stop();
                }

                if (i == chunks.Length / 2)
                {
                    // The server stays away until the forwarder has noticed.
                    await sawOutage.Task.WaitAsync(Generous);
                    Assert.True(outbox.PendingRecords > 0, "records are held while the server is away");
                    _server.Start();
                }

                await sink.WriteAsync(chunks[i], CancellationToken.None);
                acknowledged.AddRange(chunks[i]);
                await Task.Delay(1);
            }

            await sawRecovery.Task.WaitAsync(Generous);
            using (var flush = new CancellationTokenSource(Generous))
            {
                await sink.FlushAsync(flush.Token);
            }

            await stop.CancelAsync();
            await run;
            Assert.Equal(0, outbox.PendingRecords);
            Assert.Equal(0, outbox.DroppedRecords);
        }

        Assert.Equal(Count, acknowledged.Count);
        var expected = ExpectedSamples.Of(acknowledged.Select(r => RecordPoints.ToPoint(r, Records.Site)!));
        ExpectedSamples.AssertExactlyOnce(expected, await _server.ExportAsync(expected.Count));
    }
}
