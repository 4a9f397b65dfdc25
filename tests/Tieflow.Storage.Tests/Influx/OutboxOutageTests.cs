using System.Diagnostics;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Outbox;
using Tieflow.Storage.Points;
using Tieflow.Tests.Shared;
using Xunit.Abstractions;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Storage.Tests.Influx;

/// <summary>
/// The outbox in front of a real victoria-metrics that is stopped while records are written and started again: the
/// server goes away after a quarter of the records and comes back at half of them, once the forwarder has noticed.
/// CI writes 20,000 records as fast as it can; <c>eng/soak/reliability.sh outage</c> sets
/// <c>TIEFLOW_SOAK_OUTAGE_RECORDS</c> (900,000) and <c>TIEFLOW_SOAK_OUTAGE_RATE</c> (500 records/s: 30 minutes, a
/// 7.5-minute outage). The records are made one chunk at a time and made again from their seed for the comparison, so
/// that what the process holds while it writes is the outbox's and the forwarder's, not the test's; the figures
/// (pending at most, times, resident memory) are written to the test output.
/// </summary>
public sealed class OutboxOutageTests : IDisposable
{
    private const int Seed = 11;
    private const int Chunk = 100;
    private static readonly TimeSpan Generous = TimeSpan.FromSeconds(120);
    private readonly int _count = SoakSize.Of("TIEFLOW_SOAK_OUTAGE_RECORDS", 20_000);
    private readonly int _rate = SoakSize.Of("TIEFLOW_SOAK_OUTAGE_RATE", 0, minimum: 0); // records per second; 0: as fast as it can
    private readonly VictoriaMetricsServer _server = new();
    private readonly TempFolder _folder = new();
    private readonly ITestOutputHelper _log;

    public OutboxOutageTests(ITestOutputHelper log) => _log = log;

    public void Dispose()
    {
        _server.Dispose();
        _folder.Dispose();
    }

    [Fact]
    public async Task Every_acknowledged_record_arrives_exactly_once_across_a_server_outage()
    {
        int acknowledged = 0;
        int self = Environment.ProcessId;
        var clock = Stopwatch.StartNew();
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
            var errors = new List<string>();
            forwarder.StateChanged += s =>
            {
                if (s is ForwarderState.Failing or ForwarderState.CircuitOpen)
                {
                    lock (errors)
                    {
                        errors.Add($"{clock.Elapsed.TotalSeconds:F1} s {s}: {forwarder.LastError}");
                    }
                }

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
            int chunks = (_count + Chunk - 1) / Chunk;
            int i = 0;
            long mostPending = 0;
            TimeSpan stopped = TimeSpan.Zero, started = TimeSpan.Zero;
            foreach (MonitorRecord[] chunk in Records.MixedSequence(seed: Seed).Take(_count).Chunk(Chunk))
            {
                if (i == chunks / 4)
                {
                    _server.Stop();
                    stopped = clock.Elapsed;
                }

                if (i == chunks / 2)
                {
                    // The server stays away until the forwarder has noticed.
                    await sawOutage.Task.WaitAsync(Generous);
                    Assert.True(outbox.PendingRecords > 0, "records are held while the server is away");
                    mostPending = Math.Max(mostPending, outbox.PendingRecords);
                    _log.WriteLine($"{clock.Elapsed.TotalSeconds:F0} s: server started again after {(clock.Elapsed - stopped).TotalSeconds:F0} s away, {outbox.PendingRecords} records held");
                    _server.Start();
                    started = clock.Elapsed;
                }

                if (_rate > 0)
                {
                    // Paced: chunk i is due at i * Chunk / rate seconds from the start.
                    TimeSpan due = TimeSpan.FromSeconds((double)i * Chunk / _rate) - clock.Elapsed;
                    if (due > TimeSpan.Zero)
                    {
                        await Task.Delay(due);
                    }
                }

                await sink.WriteAsync(chunk, CancellationToken.None);
                acknowledged += chunk.Length;
                if (_rate == 0)
                {
                    await Task.Delay(1);
                }

                i++;
                if (i % Math.Max(1, chunks / 10) == 0)
                {
                    mostPending = Math.Max(mostPending, outbox.PendingRecords);
                    _log.WriteLine($"{clock.Elapsed.TotalSeconds:F0} s: {acknowledged} records acknowledged, {outbox.PendingRecords} held, RSS {SoakSize.RssKib(self) / 1024} MB");
                }
            }

            TimeSpan written = clock.Elapsed;
            await sawRecovery.Task.WaitAsync(Generous);
            using (var flush = new CancellationTokenSource(Generous))
            {
                await sink.FlushAsync(flush.Token);
            }

            await stop.CancelAsync();
            await run;
            Assert.Equal(0, outbox.PendingRecords);
            Assert.Equal(0, outbox.DroppedRecords);
            lock (errors)
            {
                _log.WriteLine($"forwarder: {forwarder.Forwarded} records forwarded, {forwarder.Failures} failed requests; the first and last failures: {string.Join(" | ", errors.Take(3).Concat(errors.Skip(Math.Max(3, errors.Count - 3))))}");
            }

            _log.WriteLine($"records {acknowledged} in {written.TotalSeconds:F0} s ({(_rate > 0 ? $"paced at {_rate}/s" : "unpaced")}), server away {(started - stopped).TotalSeconds:F0} s, "
                + $"all forwarded {(clock.Elapsed - started).TotalSeconds:F0} s after it came back, at most {mostPending} held; "
                + $"peak RSS of the writing process {SoakSize.PeakRssKib(self) / 1024} MB before the comparison");
        }

        Assert.Equal(_count, acknowledged);
        var expected = ExpectedSamples.Of(Records.MixedSequence(seed: Seed).Take(_count).Select(r => RecordPoints.ToPoint(r, Records.Site)!));
        Dictionary<string, List<double>> exported = await _server.ExportAsync(expected.Count);
        _log.WriteLine($"samples expected {expected.Count}, exported {exported.Count} distinct ({exported.Values.Sum(v => v.Count)} in all)");
        ExpectedSamples.AssertExactlyOnce(expected, exported);
        _log.WriteLine($"exactly once: {expected.Count} samples of {_count} records");
    }
}
